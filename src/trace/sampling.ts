// Spatially hashed sampling [SHARDS] (Waldspurger et al., "Efficient MRC Construction with SHARDS",
// USENIX FAST 2015): an entry is sampled when hash(entry) mod P < T, so every lookup of a sampled
// entry is kept and the sampled entries form a fixed random share R = T/P of all entries. Stack
// distances measured among sampled entries, scaled by 1/R, estimate the full distances.

import { mixEntryIndex } from './key-table';
import type { LookupSink } from './lookups';
import type { StackDistances } from './stack-distance';

/** P: the hash space the threshold cuts. */
export const SAMPLING_MODULUS = 1 << 24;
/** A seed distinct from the key table's, so sampled entries do not crowd its slots. */
const SAMPLING_SEED = 0x6a09e667;

/** The threshold T for rate R; the rate really applied is T/P. */
export function samplingThreshold(rate: number): number {
  return Math.max(1, Math.min(SAMPLING_MODULUS, Math.round(rate * SAMPLING_MODULUS)));
}

export function isSampled(entry: number, threshold: number): boolean {
  return (mixEntryIndex(entry, SAMPLING_SEED) & (SAMPLING_MODULUS - 1)) < threshold;
}

/** Counts every lookup and passes the sampled ones on. */
export class SampledLookups implements LookupSink {
  lookups = 0;
  constructor(private readonly target: StackDistances, private readonly threshold: number) {}

  lookup(entry: number): void {
    this.lookups++;
    if ((mixEntryIndex(entry, SAMPLING_SEED) & (SAMPLING_MODULUS - 1)) < this.threshold) this.target.lookup(entry);
  }
}
