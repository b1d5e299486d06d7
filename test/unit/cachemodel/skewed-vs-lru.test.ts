// The characteristic-time approximation of LRU [CHE] ("Hierarchical Web caching systems: modeling,
// design and experimental results", IEEE JSAC 20(7), 2002; full citation in docs/sources.md) against a
// deterministic LRU simulation (seeded mulberry32 generator, LRU written from its definition in
// lru-simulation.ts). The bar: agreement within 0.02 for Zipf s = 0.6, 0.8, 1.0 and a hot spot.
import { strict as assert } from 'node:assert';
import { modelCache, prepareCacheModel, type AccessPattern, type CacheModelGeometryInput } from '../../../src/core/cachemodel';
import { characteristicTime, weightedItems } from '../../../src/core/cachemodel/characteristic-time';
import { zipfItems } from '../../../src/core/cachemodel/zipf';
import { fine, mulberry32, simulateLru, zipfSampler } from './lru-simulation';

const KiB = 1024n;
const MiB = 1024n * KiB;

const ENTRIES = 2000;
const WARMUP = 40_000;
const MEASURED = 250_000;
const FRACTIONS = [0.001, 0.02, 0.1, 0.25, 0.5];
const TOLERANCE = 0.02;

// 64 KiB clusters in 4 KiB slices: each cache entry maps 32 MiB of guest disk [SPEC].
const SPAN = 32 * 1024 * 1024;

function modelled(access: AccessPattern, capacity: number, workingSet: { offset: bigint; length: bigint }): number {
  const input: CacheModelGeometryInput = {
    virtualSize: workingSet.offset + workingSet.length + 7n * MiB,
    clusterSize: 64n * KiB,
    extendedL2: false,
    entrySize: 4n * KiB,
    workingSet,
    access,
  };
  const result = modelCache({ ...input, cacheBytes: BigInt(capacity) * 4n * KiB });
  if (!result.ok) assert.fail(result.error.message);
  assert.equal(result.value.method, 'characteristic-time');
  return result.value.hitRatio;
}

describe('cachemodel: characteristic-time approximation vs LRU simulation [CHE]', function () {
  this.timeout(20_000);
  const aligned = { offset: 0n, length: BigInt(ENTRIES) * BigInt(SPAN) };

  for (const s of [0.6, 0.8, 1.0]) {
    it(`Zipf s = ${s} over ${ENTRIES} entries, caches of ${FRACTIONS.join(', ')} of them: within ${TOLERANCE}`, () => {
      for (const fraction of FRACTIONS) {
        const capacity = Math.max(2, Math.round(ENTRIES * fraction));
        const draw = zipfSampler(ENTRIES, s, mulberry32(1000 + capacity));
        const simulated = simulateLru(draw, capacity, WARMUP, MEASURED);
        const model = modelled({ kind: 'zipf', exponent: s }, capacity, aligned);
        assert.ok(Math.abs(model - simulated) <= TOLERANCE, `s=${s} C=${capacity}: model ${model.toFixed(4)} vs LRU ${simulated.toFixed(4)}`);
      }
    });
  }

  for (const [share, fraction] of [[0.9, 0.1], [0.8, 0.2]] as const) {
    it(`hot spot ${share}/${fraction} on an unaligned working set, accesses drawn as guest byte offsets: within ${TOLERANCE}`, () => {
      // The working set starts a third of the way into an entry and ends mid-entry, so the first, last
      // and hot/cold boundary entries are partly covered; the simulation maps offsets to entries itself.
      const offset = 5 * SPAN + Math.floor(SPAN / 3);
      const length = (ENTRIES - 1) * SPAN - Math.floor(SPAN / 2);
      const hotLength = Math.floor(length * fraction);
      const workingSet = { offset: BigInt(offset), length: BigInt(length) };
      for (const cacheFraction of FRACTIONS) {
        const capacity = Math.max(2, Math.round(ENTRIES * cacheFraction));
        const random = mulberry32(77 + capacity);
        const u = fine(random);
        const draw = (): number => {
          const inHot = random() < share;
          const guest = inHot ? offset + Math.floor(u() * hotLength) : offset + hotLength + Math.floor(u() * (length - hotLength));
          return Math.floor(guest / SPAN);
        };
        const simulated = simulateLru(draw, capacity, WARMUP, MEASURED);
        const model = modelled({ kind: 'concentrated', share, fraction }, capacity, workingSet);
        assert.ok(Math.abs(model - simulated) <= TOLERANCE, `hotspot ${share}/${fraction} C=${capacity}: model ${model.toFixed(4)} vs LRU ${simulated.toFixed(4)}`);
      }
    });
  }
});

describe('cachemodel: the numerical solution', () => {
  it('the characteristic time solves sum(1 - exp(-q T)) = C to 1e-9 (the [CHE] equation)', () => {
    const items = zipfItems(3000, 0.9);
    for (const capacity of [2, 10, 300, 1500, 2999]) {
      const t = characteristicTime(items, capacity);
      let occupied = 0;
      items.weights.forEach((w, i) => {
        occupied += w * -Math.expm1(-(items.probabilities[i] as number) * t);
      });
      assert.ok(Math.abs(occupied - capacity) <= 1e-9 * capacity, `C=${capacity}: ${occupied}`);
    }
  });

  for (const n of [1000, 5000, 100_000]) it(`the fast Zipf evaluation (exact head, integral tail) matches the exact sum over ${n} entries within 1e-6`, () => {
    for (const s of [0.6, 1.0, 1.4]) {
      const exact = weightedItems(Array.from({ length: n }, (_, i) => ({ count: 1, probability: (i + 1) ** -s })));
      const model = prepareCacheModel({
        virtualSize: BigInt(n) * 512n * MiB, clusterSize: 64n * KiB, extendedL2: false, access: { kind: 'zipf', exponent: s },
      });
      assert.ok(model.ok);
      for (const capacity of [2, 50, Math.round(n / 20), Math.round(n * 0.6), Math.round(n * 0.97)]) {
        const reference = cheExact(exact, capacity);
        const fast = model.value.hitRatioAt(capacity);
        assert.ok(Math.abs(fast - reference) <= 1e-6, `s=${s} C=${capacity}: fast ${fast} vs exact sum ${reference}`);
      }
    }
  });
});

/** The [CHE] hit ratio by plain bisection on the untransformed equation: a second, simple solver. */
function cheExact(items: ReturnType<typeof weightedItems>, capacity: number): number {
  const occupied = (t: number): number => {
    let sum = 0;
    for (let i = 0; i < items.weights.length; i++) sum += -Math.expm1(-(items.probabilities[i] as number) * t);
    return sum;
  };
  let lo = 0;
  let hi = capacity;
  while (occupied(hi) < capacity) hi *= 2;
  for (let i = 0; i < 200 && hi - lo > 1e-12 * hi; i++) {
    const mid = (lo + hi) / 2;
    if (occupied(mid) < capacity) lo = mid;
    else hi = mid;
  }
  const t = (lo + hi) / 2;
  let hit = 0;
  for (let i = 0; i < items.weights.length; i++) {
    const q = items.probabilities[i] as number;
    hit += q * -Math.expm1(-q * t);
  }
  return hit;
}
