// Uniform random access: the independent reference model's textbook result [IRM] (docs/sources.md
// cites the operating-systems theory textbook it comes from): N equally likely items and room for C gives a hit ratio of C/N.
// Entry counts come from the qcow2 table geometry [SPEC].
import { strict as assert } from 'node:assert';
import fc from 'fast-check';
import { modelCache, type CacheModelReport } from '../../../src/core/cachemodel';

const KiB = 1024n;
const MiB = 1024n * KiB;
const GiB = 1024n * MiB;
const TiB = 1024n * GiB;

function uniform(virtualSize: bigint, clusterSize: bigint, cacheBytes: bigint, entrySize?: bigint, workingSet?: { offset: bigint; length: bigint }): CacheModelReport {
  const result = modelCache({ virtualSize, clusterSize, extendedL2: false, entrySize, cacheBytes, workingSet, access: { kind: 'random' } });
  if (!result.ok) assert.fail(result.error.message);
  return result.value;
}

describe('cachemodel: uniform access [IRM]', () => {
  it('whole tables: 1 TiB, 64 KiB clusters, 32 MiB cache holds 512 of 2048 tables: C/N = 0.25', () => {
    const report = uniform(TiB, 64n * KiB, 32n * MiB);
    assert.equal(report.entries, 2048);
    assert.equal(report.cachedEntries, 512);
    assert.equal(report.hitRatio, 512 / 2048);
    assert.equal(report.missesPer1000, 750);
    assert.equal(report.metadataBytesPerIo, 0.75 * 65536); // a miss reads one whole table
    assert.equal(report.method, 'exact-random');
  });

  it('slices: the same disk and cache in 4 KiB slices holds 8192 of 32768: C/N = 0.25', () => {
    const report = uniform(TiB, 64n * KiB, 32n * MiB, 4n * KiB);
    assert.equal(report.entries, 32768);
    assert.equal(report.cachedEntries, 8192);
    assert.equal(report.hitRatio, 0.25);
    assert.equal(report.metadataBytesPerIo, 0.75 * 4096); // a miss reads one slice
  });

  it('a cache at or beyond full coverage hits every time', () => {
    assert.equal(uniform(TiB, 64n * KiB, 128n * MiB).hitRatio, 1);
    assert.equal(uniform(TiB, 64n * KiB, GiB).hitRatio, 1);
    assert.equal(uniform(TiB, 64n * KiB, GiB).cachedEntries, 2048);
  });

  it('the driver keeps at least 2 entries [CACHE], and only whole entries count', () => {
    const tiny = uniform(TiB, 64n * KiB, 1n);
    assert.equal(tiny.capacityEntries, 2);
    assert.equal(tiny.effectiveCacheBytes, 128n * KiB);
    assert.equal(tiny.hitRatio, 2 / 2048);
    assert.equal(uniform(TiB, 64n * KiB, 3n * 65536n + 65535n).cachedEntries, 3);
  });

  it('property: exactly C/N for every aligned working set, entry size and cache size', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 9, max: 21 }),
        fc.integer({ min: 0, max: 12 }),
        fc.boolean(),
        fc.integer({ min: 1, max: 5000 }),
        fc.integer({ min: 0, max: 5000 }),
        fc.integer({ min: 0, max: 6000 }),
        (clusterBits, sliceShift, extended, length, start, cacheEntries) => {
          const clusterSize = 1n << BigInt(clusterBits);
          const useExtended = extended && clusterBits >= 14;
          const entrySize = 1n << BigInt(Math.max(9, clusterBits - sliceShift));
          const span = (entrySize / (useExtended ? 16n : 8n)) * clusterSize;
          const workingSet = { offset: BigInt(start) * span, length: BigInt(length) * span };
          const result = modelCache({
            virtualSize: workingSet.offset + workingSet.length + BigInt(start % 3) * span,
            clusterSize, extendedL2: useExtended, entrySize, workingSet,
            cacheBytes: BigInt(cacheEntries) * entrySize, access: { kind: 'random' },
          });
          if (!result.ok) return false;
          const c = Math.min(length, Math.max(2, cacheEntries));
          return result.value.entries === length && result.value.cachedEntries === c && result.value.hitRatio === c / length;
        },
      ),
      { numRuns: 300 },
    );
  });
});
