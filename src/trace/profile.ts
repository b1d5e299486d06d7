// The hit ratio of every cache size from a stack-distance histogram [MATTSON]: a cache of C entries
// hits the lookups with distance < C; first touches always miss. With sampling at rate R [SHARDS] a
// sampled distance d (0-based) stands for a full stack position (d + 1) / R, so it hits when
// d + 1 <= C * R; counts stand for 1/R as many.

import type { StackDistances } from './stack-distance';

/** Guards the floor of C * R against a product such as 3 * 0.1 = 0.30000000000000004 rounding down. */
const EPSILON = 1e-9;

export interface ProfileCounts {
  /** Every lookup of the trace (exact, sampled or not). */
  lookups: number;
  /** Lookups of entries never looked up before (estimated when sampled). */
  firstTouches: number;
  /** Distinct cache entries looked up (estimated when sampled). */
  entriesTouched: number;
  /** 1 when every lookup was counted; else the share of entries sampled. */
  sampleRate: number;
}

/** A profile as plain data: what a worker thread hands back (structured clone keeps the typed array). */
export interface HitProfileData extends ProfileCounts {
  cumulative: Float64Array;
  expected: number;
  adjustment: number;
}

export class HitProfile implements ProfileCounts {
  readonly lookups: number;
  readonly firstTouches: number;
  readonly entriesTouched: number;
  readonly sampleRate: number;
  /** cumulative[d]: sampled lookups with distance <= d. */
  private readonly cumulative: Float64Array;
  /** Lookups the sampled ones stand for: all lookups times the rate. */
  private readonly expected: number;
  /**
   * SHARDS-adj: the sample's share of lookups drifts from R when a few hot entries happen to be
   * sampled (or not); the difference between expected and sampled lookups is added to the smallest
   * distance, where those hot entries' lookups sit [SHARDS, section 4.3].
   */
  private readonly adjustment: number;

  constructor(data: HitProfileData) {
    this.cumulative = data.cumulative;
    this.expected = data.expected;
    this.adjustment = data.adjustment;
    this.lookups = data.lookups;
    this.sampleRate = data.sampleRate;
    this.firstTouches = data.firstTouches;
    this.entriesTouched = data.entriesTouched;
  }

  /** The profile of the distances counted, standing for `allLookups` lookups at `sampleRate`. */
  static of(distances: StackDistances, allLookups: number, sampleRate: number): HitProfile {
    const histogram = distances.distanceHistogram();
    const cumulative = new Float64Array(histogram.length);
    let sum = 0;
    for (let d = 0; d < histogram.length; d++) {
      sum += histogram[d] as number;
      cumulative[d] = sum;
    }
    const expected = sampleRate === 1 ? distances.lookups : allLookups * sampleRate;
    return new HitProfile({
      cumulative,
      expected,
      adjustment: expected - distances.lookups,
      lookups: allLookups,
      sampleRate,
      firstTouches: sampleRate === 1 ? distances.firstTouches : Math.round(distances.firstTouches / sampleRate),
      entriesTouched: sampleRate === 1 ? distances.entries : Math.round(distances.entries / sampleRate),
    });
  }

  /** The profile as plain data, for another thread (new HitProfile(data) rebuilds it). */
  data(): HitProfileData {
    const { cumulative, expected, adjustment, lookups, sampleRate, firstTouches, entriesTouched } = this;
    return { cumulative, expected, adjustment, lookups, sampleRate, firstTouches, entriesTouched };
  }

  /** Lookups that hit in a cache of `entries` entries, as a share of all lookups. */
  hitRatio(entries: number): number {
    if (this.expected === 0) return 0;
    const reach = Math.floor(entries * this.sampleRate + EPSILON);
    if (reach < 1) return 0;
    const index = Math.min(reach, this.cumulative.length) - 1;
    return Math.max(0, Math.min(1, ((this.cumulative[index] as number) + this.adjustment) / this.expected));
  }

  /** The smallest cache, in entries, a sampled curve resolves: one sampled distance stands for 1/R entries. */
  get resolution(): number {
    return Math.ceil(1 / this.sampleRate - EPSILON);
  }

  /** The best any cache reaches on this trace: every lookup but the first touches. */
  get ceiling(): number {
    return this.hitRatio(Number.MAX_SAFE_INTEGER);
  }

  /** The smallest cache, in entries, whose hit ratio reaches `target`; undefined when none does. */
  smallestEntriesFor(target: number): number | undefined {
    if (target <= 0) return 1;
    const needed = target * this.expected * (1 - 1e-12) - this.adjustment;
    // cumulative is non-decreasing: binary search the first distance whose count reaches the need.
    let low = 0;
    let high = this.cumulative.length;
    while (low < high) {
      const mid = (low + high) >>> 1;
      if ((this.cumulative[mid] as number) >= needed) high = mid;
      else low = mid + 1;
    }
    if (low === this.cumulative.length || this.expected === 0) return undefined;
    // Distance `low` hits once C * R >= low + 1.
    return Math.max(1, Math.ceil((low + 1) / this.sampleRate - EPSILON));
  }
}
