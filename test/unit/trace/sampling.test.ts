// Spatially hashed sampling [SHARDS] against the exact curve on the same lookups: mean absolute error
// <= 0.01 at rate 0.1 over at least 2M lookups (the paper reports errors of this order), and the
// characteristic-time approximation [CHE] fed with the trace's own per-entry popularity within 0.02
// of the exact curve on an independent-reference trace.
import { strict as assert } from 'node:assert';
import { cheHitRatio, weightedItems } from '../../../src/core/cachemodel/characteristic-time';
import { HitProfile } from '../../../src/trace/profile';
import { SampledLookups, samplingThreshold, SAMPLING_MODULUS } from '../../../src/trace/sampling';
import { StackDistances } from '../../../src/trace/stack-distance';
import { CHE, SHARDS } from '../../helpers/sources';
import { mulberry32, zipfSampler } from '../cachemodel/lru-simulation';

const LOOKUPS = 2_400_000;

function curves(next: () => number, rate: number): { exact: HitProfile; sampled: HitProfile; counts: Map<number, number> } {
  const exact = new StackDistances();
  const sampledDistances = new StackDistances();
  const threshold = samplingThreshold(rate);
  const sampler = new SampledLookups(sampledDistances, threshold);
  const counts = new Map<number, number>();
  for (let i = 0; i < LOOKUPS; i++) {
    const key = next();
    exact.lookup(key);
    sampler.lookup(key);
    counts.set(key, (counts.get(key) ?? 0) + 1);
  }
  return {
    exact: HitProfile.of(exact, exact.lookups, 1),
    sampled: HitProfile.of(sampledDistances, sampler.lookups, threshold / SAMPLING_MODULUS),
    counts,
  };
}

/** Cache sizes at powers of two of entries up to the working set, and quarter steps between. */
function sizes(entries: number): number[] {
  const out: number[] = [];
  for (let c = 1; c < entries; c *= 2) out.push(c, Math.round(c * 1.5));
  out.push(entries);
  return out.filter((c) => c >= 1 && c <= entries);
}

describe('trace engine: sampled curves and the characteristic-time approximation', function () {
  this.timeout(120_000);

  const workloads: Array<[string, () => () => number]> = [
    ['uniform over 400,000 entries', () => { const r = mulberry32(21); return () => Math.floor(r() * 400_000); }],
    ['Zipf s=0.8 over 400,000 entries', () => zipfSampler(400_000, 0.8, mulberry32(22))],
    ['Zipf s=1.1 over 100,000 entries, entry numbers scattered over a 1 PiB disk', () => { const z = zipfSampler(100_000, 1.1, mulberry32(23)); return () => z() * 104_729 + 2 ** 45; }],
  ];

  for (const [label, make] of workloads) {
    it(`${SHARDS} ${label}, ${LOOKUPS.toLocaleString('en-US')} lookups, rate 0.1: mean absolute error <= 0.01`, () => {
      const { exact, sampled } = curves(make(), 0.1);
      // The error over the whole curve, cache sizes evenly spaced from 1% to 100% of the working set.
      const points = Array.from({ length: 100 }, (_, i) => Math.round(((i + 1) / 100) * exact.entriesTouched));
      const errors = points.map((c) => Math.abs(exact.hitRatio(c) - sampled.hitRatio(c)));
      const mean = errors.reduce((a, b) => a + b, 0) / errors.length;
      // For information: at powers of two from 1/R entries (a sampled distance d stands for (d + 1)/R).
      const small = sizes(exact.entriesTouched).filter((c) => c >= 1 / 0.1).map((c) => Math.abs(exact.hitRatio(c) - sampled.hitRatio(c)));
      console.log(`      ${label}: mean absolute error ${mean.toFixed(4)} over 100 even sizes (max ${Math.max(...errors).toFixed(4)}); ${(small.reduce((a, b) => a + b, 0) / small.length).toFixed(4)} over powers of two`);
      assert.ok(mean <= 0.01, `mean absolute error ${mean}`);
      assert.ok(Math.abs(sampled.entriesTouched - exact.entriesTouched) / exact.entriesTouched < 0.05, `${sampled.entriesTouched} vs ${exact.entriesTouched} entries`);
      assert.equal(sampled.lookups, exact.lookups);
    });
  }

  it(`${CHE} Zipf s=0.9 over 20,000 entries (independent references): the approximation fed the measured popularity is within 0.02 of the exact curve`, () => {
    const { exact, counts } = curves(zipfSampler(20_000, 0.9, mulberry32(31)), 1);
    const items = weightedItems([...counts.values()].map((n) => ({ count: 1, probability: n / LOOKUPS })));
    for (const c of sizes(exact.entriesTouched)) {
      const approximated = cheHitRatio(items, c);
      const measured = exact.hitRatio(c);
      assert.ok(Math.abs(approximated - measured) <= 0.02, `C=${c}: approximation ${approximated.toFixed(4)} vs exact ${measured.toFixed(4)}`);
    }
  });
});
