// The recommendation from a measured curve, shared by the rules and the disk's report so both say
// the same number: the smallest cache reaching the target hit ratio on the trace (the working set
// when none does), at least the driver's two entries, rounded up to a value that reads well.
import { maxOf, minimumL2Cache, roundUp } from '../core/sizing';
import type { MeasuredCurve } from '../model/traces';

/**
 * Rounds up to a multiple of the entry size and of a sixteenth of the largest power of two not above
 * the value (65.7 MiB -> 68 MiB): at most 6.25% more, and an LRU cache never hits less with more room.
 */
export function readableCacheSize(bytes: bigint, entrySize: bigint): bigint {
  let power = 1n;
  while (power * 2n <= bytes) power *= 2n;
  const step = maxOf(entrySize, power / 16n);
  return roundUp(roundUp(bytes, entrySize), step);
}

export interface MeasuredTarget {
  cacheBytes: bigint;
  /** False when no cache reaches the target on the trace (first touches always miss). */
  reached: boolean;
}

export function measuredTarget(curve: MeasuredCurve, target: number, entrySize: bigint): MeasuredTarget {
  const smallest = curve.smallestCacheFor(target);
  return { cacheBytes: readableCacheSize(maxOf(smallest.cacheBytes, minimumL2Cache(entrySize)), entrySize), reached: smallest.reached };
}
