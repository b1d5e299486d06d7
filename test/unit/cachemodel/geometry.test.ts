// Cache entry geometry and the mapping of a working set onto cache entries, checked against the qcow2
// format specification's table geometry [SPEC] and the cache notes' worked examples [CACHE]
// (docs/sources.md, "Layout" and "Cache sizing").
import { strict as assert } from 'node:assert';
import { entryGeometry, entrySpan, modelCache, type EntryGeometry } from '../../../src/core/cachemodel';

const KiB = 1024n;
const MiB = 1024n * KiB;
const GiB = 1024n * MiB;
const TiB = 1024n * GiB;

function geometry(clusterSize: bigint, extendedL2 = false, entrySize?: bigint): EntryGeometry {
  const result = entryGeometry(clusterSize, extendedL2, entrySize);
  if (!result.ok) assert.fail(result.error.message);
  return result.value;
}

function fullCoverage(virtualSize: bigint, clusterSize: bigint, extendedL2 = false, entrySize?: bigint): bigint {
  const result = modelCache({ virtualSize, clusterSize, extendedL2, entrySize, cacheBytes: 0n, access: { kind: 'random' } });
  if (!result.ok) assert.fail(result.error.message);
  return result.value.fullCoverageBytes;
}

describe('cachemodel: entry geometry', () => {
  it('[SPEC] one L2 table is one cluster of 8-byte entries and maps cluster_size^2 / 8 bytes', () => {
    const g = geometry(64n * KiB);
    assert.equal(g.l2EntryBytes, 8n);
    assert.equal(g.l2EntriesPerEntry, 8192n);
    assert.equal(g.guestBytesPerEntry, 512n * MiB);
    assert.equal(g.wholeTable, true);
  });

  it('[SPEC] extended L2 entries are 16 bytes, halving what a table maps', () => {
    const g = geometry(64n * KiB, true);
    assert.equal(g.l2EntryBytes, 16n);
    assert.equal(g.guestBytesPerEntry, 256n * MiB);
  });

  it('[SPEC] 1 MiB clusters: one table maps 128 GiB, so a 512 GiB disk has exactly four tables', () => {
    assert.equal(geometry(MiB).guestBytesPerEntry, 128n * GiB);
    const result = modelCache({ virtualSize: 512n * GiB, clusterSize: MiB, extendedL2: false, cacheBytes: 0n, access: { kind: 'random' } });
    assert.ok(result.ok);
    assert.equal(result.value.entries, 4);
  });

  it('[CACHE] a slice of S bytes maps S / entry_bytes clusters', () => {
    const g = geometry(64n * KiB, false, 4n * KiB);
    assert.equal(g.l2EntriesPerEntry, 512n);
    assert.equal(g.guestBytesPerEntry, 32n * MiB);
    assert.equal(g.wholeTable, false);
  });

  it('[CACHE] worked example: 1280 MiB with 64 KiB clusters takes 192 KiB of whole-table cache (3 tables)', () => {
    assert.equal(fullCoverage(1280n * MiB, 64n * KiB), 192n * KiB);
    // With 4 KiB slices the 160 KiB of L2 entries fit exactly (40 slices).
    assert.equal(fullCoverage(1280n * MiB, 64n * KiB, false, 4n * KiB), 160n * KiB);
  });

  it('docs/sources.md check values (common practice): full L2 cache per virtual size and cluster', () => {
    const table: Array<[bigint, bigint, boolean, bigint]> = [
      [8n * GiB, 64n * KiB, false, MiB],
      [20n * GiB, 64n * KiB, false, (5n * MiB) / 2n],
      [256n * GiB, 64n * KiB, false, 32n * MiB],
      [TiB, 512n, false, 16n * GiB],
      [TiB, 4n * KiB, false, 2n * GiB],
      [TiB, 64n * KiB, false, 128n * MiB],
      [TiB, MiB, false, 8n * MiB],
      [TiB, 2n * MiB, false, 4n * MiB],
      [TiB, 64n * KiB, true, 256n * MiB],
    ];
    for (const [size, cluster, extended, expected] of table) {
      assert.equal(fullCoverage(size, cluster, extended), expected, `${size} / ${cluster} / ${extended}`);
    }
  });

  it('[SPEC] rejects clusters outside 512 B..2 MiB or not a power of two, and extended L2 below 16 KiB', () => {
    for (const bad of [256n, 3n * KiB, 4n * MiB]) {
      const result = entryGeometry(bad, false);
      assert.ok(!result.ok);
      assert.match(result.error.message, new RegExp(`${bad} bytes.*power of two from 512 bytes to 2 MiB`));
    }
    const extended = entryGeometry(8n * KiB, true);
    assert.ok(!extended.ok);
    assert.match(extended.error.message, /at least 16 KiB/);
  });

  it('[CACHE] rejects slices that are not a power of two from 512 B to the cluster size', () => {
    for (const bad of [256n, 3000n, 128n * KiB]) {
      const result = entryGeometry(64n * KiB, false, bad);
      assert.ok(!result.ok);
      assert.equal(result.error.field, 'entrySize');
      assert.match(result.error.message, new RegExp(`${bad} bytes`));
    }
  });
});

describe('cachemodel: working set onto entries', () => {
  const table = geometry(64n * KiB); // 512 MiB per entry
  const slice = geometry(64n * KiB, false, 4n * KiB); // 32 MiB per entry

  it('counts partly covered first and last entries whole', () => {
    const span = entrySpan(table, { offset: 500n * MiB, length: 600n * MiB });
    // 500 MiB .. 1100 MiB touches tables 0, 1 and 2.
    assert.equal(span.firstEntry, 0n);
    assert.equal(span.entries, 3n);
    assert.equal(span.firstCovered, 12n * MiB);
    assert.equal(span.lastCovered, 76n * MiB);
  });

  it('a working set straddling a table boundary needs two whole tables but only a few slices', () => {
    const set = { offset: 496n * MiB, length: 64n * MiB };
    assert.equal(entrySpan(table, set).entries, 2n);
    assert.equal(entrySpan(slice, set).entries, 3n);
  });

  it('an aligned working set touches exactly length / span entries', () => {
    assert.deepEqual(entrySpan(slice, { offset: 64n * MiB, length: 320n * MiB }), {
      firstEntry: 2n,
      entries: 10n,
      firstCovered: 32n * MiB,
      lastCovered: 32n * MiB,
    });
  });

  it('rejects a working set outside the disk with a message naming it', () => {
    const result = modelCache({
      virtualSize: GiB, clusterSize: 64n * KiB, extendedL2: false, cacheBytes: MiB,
      workingSet: { offset: 768n * MiB, length: 512n * MiB }, access: { kind: 'random' },
    });
    assert.ok(!result.ok);
    assert.equal(result.error.field, 'workingSet');
    assert.match(result.error.message, /past the end of the 1073741824-byte disk/);
  });
});
