// Whole tables versus slices for a working set that straddles an L2 table boundary. Geometry from the
// qcow2 specification [SPEC] (a 64 KiB-cluster table maps 512 MiB; a 4 KiB slice maps 32 MiB [CACHE]);
// hit ratios from the model checked by a seeded LRU simulation of guest byte offsets.
import { strict as assert } from 'node:assert';
import { modelCache, type CacheModelReport } from '../../../src/core/cachemodel';
import { fine, mulberry32, simulateLru } from './lru-simulation';

const KiB = 1024n;
const MiB = 1024n * KiB;
const GiB = 1024n * MiB;

// 64 MiB of guest disk from 496 MiB: 16 MiB in table 0 and 48 MiB in table 1; in slices, half of
// the slice at 480 MiB, all of the one at 512 MiB and half of the one at 544 MiB.
const workingSet = { offset: 496n * MiB, length: 64n * MiB };

function report(entrySize: bigint, cacheBytes: bigint, minEntries?: number): CacheModelReport {
  const result = modelCache({
    virtualSize: 4n * GiB, clusterSize: 64n * KiB, extendedL2: false, entrySize, cacheBytes, workingSet, minEntries,
    access: { kind: 'random' },
  });
  if (!result.ok) assert.fail(result.error.message);
  return result.value;
}

/** Uniformly random guest offsets in the working set, each mapped to the entry covering it. */
function simulated(span: number, capacity: number, seed: number): number {
  const random = fine(mulberry32(seed));
  const start = Number(workingSet.offset);
  const length = Number(workingSet.length);
  return simulateLru(() => Math.floor((start + Math.floor(random() * length)) / span), capacity, 10_000, 200_000);
}

describe('cachemodel: whole tables vs slices across a table boundary', () => {
  it('[SPEC] needs two whole tables (128 KiB) but only three 4 KiB slices (12 KiB) to be fully covered', () => {
    const whole = report(64n * KiB, 0n);
    const sliced = report(4n * KiB, 0n);
    assert.equal(whole.entries, 2);
    assert.equal(whole.fullCoverageBytes, 128n * KiB);
    assert.equal(sliced.entries, 3);
    assert.equal(sliced.fullCoverageBytes, 12n * KiB);
  });

  it('at a 12 KiB budget slices hit every time, while whole tables cannot go below 2 tables (128 KiB) [CACHE]', () => {
    assert.equal(report(4n * KiB, 12n * KiB).hitRatio, 1);
    const whole = report(64n * KiB, 12n * KiB);
    assert.equal(whole.capacityEntries, 2);
    assert.equal(whole.effectiveCacheBytes, 128n * KiB);
    assert.equal(simulated(512 * 1024 * 1024, 2, 11), 1); // simulation: two tables hold the whole set
    assert.equal(simulated(32 * 1024 * 1024, 3, 12), 1); // and so do three slices
  });

  it('two slices (8 KiB): the partly covered end slices get half the weight; the simulation agrees within 0.02', () => {
    const sliced = report(4n * KiB, 8n * KiB);
    assert.equal(sliced.method, 'characteristic-time');
    // Access shares 1/4, 1/2, 1/4 (bytes covered). [CHE]: with x = exp(-T/4), 2(1 - x) + (1 - x^2) = 2
    // gives x = sqrt 2 - 1 and a hit ratio of (1 + x) / 2 = sqrt(1/2).
    assert.ok(Math.abs(sliced.hitRatio - Math.SQRT1_2) < 1e-9, String(sliced.hitRatio));
    const lru = simulated(32 * 1024 * 1024, 2, 13);
    // Exact LRU for three items and two places: a miss is an access to the least recently used item;
    // the move-to-front order has stationary probability q_a * q_b / (1 - q_a), so P(miss) = 7/24.
    assert.ok(Math.abs(lru - 17 / 24) <= 0.01, `simulation ${lru} vs exact 17/24`);
    assert.ok(Math.abs(sliced.hitRatio - lru) <= 0.02, `model ${sliced.hitRatio} vs LRU ${lru}`);
    assert.ok(sliced.hitRatio < 1 && sliced.hitRatio > 2 / 3, 'weighted by coverage, not the plain C/N = 2/3');
  });

  it('one whole table (64 KiB, below the driver floor): exactly 1/4^2 + 3/4^2 = 0.625, and the simulation agrees', () => {
    const whole = report(64n * KiB, 64n * KiB, 1);
    assert.equal(whole.method, 'exact-single-entry');
    assert.ok(Math.abs(whole.hitRatio - 0.625) < 1e-12);
    const lru = simulated(512 * 1024 * 1024, 1, 14);
    assert.ok(Math.abs(whole.hitRatio - lru) <= 0.02, `model ${whole.hitRatio} vs LRU ${lru}`);
    // The same 64 KiB as sixteen slices holds all three slices.
    assert.equal(report(4n * KiB, 64n * KiB).hitRatio, 1);
  });
});
