// A plain LRU cache driven by a seeded generator: the independent check on the model's formulas.
// Written from the definition of LRU (on a miss with a full cache, evict the entry unused the longest),
// sharing no code with src/core/cachemodel.

export { mulberry32 } from '../../helpers/seeded-random.cjs';

/** Uniform in [0, 1) with 53 random bits, for byte offsets beyond 2^32. */
export function fine(random: () => number): () => number {
  return () => (Math.floor(random() * 2 ** 21) * 2 ** 32 + Math.floor(random() * 2 ** 32)) / 2 ** 53;
}

export class LruCache {
  private readonly order = new Map<number, true>(); // insertion order = recency order
  hits = 0;
  lookups = 0;

  constructor(private readonly capacity: number) {}

  /** Looks `key` up, counting a hit or a miss, and makes it the most recently used entry. */
  access(key: number): boolean {
    this.lookups++;
    if (this.order.has(key)) {
      this.order.delete(key);
      this.order.set(key, true);
      this.hits++;
      return true;
    }
    this.order.set(key, true);
    if (this.order.size > this.capacity) {
      const oldest = this.order.keys().next();
      if (!oldest.done) this.order.delete(oldest.value);
    }
    return false;
  }

  resetCounts(): void {
    this.hits = 0;
    this.lookups = 0;
  }

  get hitRatio(): number {
    return this.lookups === 0 ? 0 : this.hits / this.lookups;
  }
}

/** Steady-state LRU hit ratio: warm up, then measure over `measured` draws of `nextKey`. */
export function simulateLru(nextKey: () => number, capacity: number, warmup: number, measured: number): number {
  const cache = new LruCache(capacity);
  for (let i = 0; i < warmup; i++) cache.access(nextKey());
  cache.resetCounts();
  for (let i = 0; i < measured; i++) cache.access(nextKey());
  return cache.hitRatio;
}

/** Draws ranks 0..n-1 with probability proportional to (rank + 1)^-s, by inverting the CDF. */
export function zipfSampler(n: number, s: number, random: () => number): () => number {
  const cdf = new Float64Array(n);
  let sum = 0;
  for (let i = 0; i < n; i++) {
    sum += (i + 1) ** -s;
    cdf[i] = sum;
  }
  return () => {
    const u = random() * sum;
    let lo = 0;
    let hi = n - 1;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if ((cdf[mid] as number) < u) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  };
}
