// qcow2 geometry and cache coverage against the format specification, the published cache notes and
// docs/sources.md's check table and worked examples.
import { strict as assert } from 'node:assert';
import fc from 'fast-check';
import {
  checkClusterSize, checkExtendedL2, checkRefcountBits, checkSlice, dataClusters, entriesPerL2Table,
  guestBytesPerCacheEntry, guestBytesPerL2Table, isAligned, l1Entries, l2CoveredBytes, l2EntryBytes,
  l2FullCoverage, l2Tables, minimumL2Cache, minimumRefcountCache, refcountCoveredBytes, refcountEntriesPerBlock,
  subclusterSize, writeAmplification, SUBCLUSTERS_PER_CLUSTER,
} from '../../src/core/sizing';
import { parseSize } from '../../src/core/units';
import { assertErrorMentions, valueOf } from '../helpers/outcome';
import { CACHE, COMMON, SPEC } from '../helpers/sources';

const KiB = 1024n;
const MiB = 1024n * KiB;
const GiB = 1024n * MiB;
const TiB = 1024n * GiB;
const size = (text: string): bigint => valueOf(parseSize(text));

/** Every cluster size the format allows: 2^9 .. 2^21 [SPEC]. */
const ALL_CLUSTERS = Array.from({ length: 13 }, (_, i) => 1n << BigInt(9 + i));
const clusterArb = fc.integer({ min: 9, max: 21 }).map((bits) => 1n << BigInt(bits));
/** A cluster size that allows extended L2 [SPEC]: 16 KiB .. 2 MiB. */
const extendedClusterArb = fc.integer({ min: 14, max: 21 }).map((bits) => 1n << BigInt(bits));
/** Virtual sizes from 1 byte to 2^62, weighted towards round and unaligned ones alike. */
const virtualSizeArb = fc.oneof(
  fc.bigInt({ min: 1n, max: 2n ** 62n }),
  fc.bigInt({ min: 1n, max: 4n * TiB }),
  fc.tuple(fc.bigInt({ min: 1n, max: 4096n }), fc.constantFrom(MiB, GiB)).map(([n, unit]) => n * unit),
);
/** (cluster, slice) pairs: a slice is a power of two from 512 B up to the cluster [CACHE]. */
const clusterAndSliceArb = (clusters: fc.Arbitrary<bigint>): fc.Arbitrary<[bigint, bigint]> =>
  clusters.chain((cluster) =>
    fc.integer({ min: 9, max: cluster.toString(2).length - 1 })
      .map((bits): [bigint, bigint] => [cluster, 1n << BigInt(bits)]));

describe('sizing: docs/sources.md check table (full-coverage L2 cache, whole-table entries)', () => {
  // virtual size, cluster, entry bytes, full L2 cache -- common practice check values that follow
  // from [CACHE]'s formula covered = C * cluster / entry_bytes.
  const table: [string, string, bigint, string][] = [
    ['8G', '64K', 8n, '1M'],
    ['20G', '64K', 8n, '2.5M'],
    ['256G', '64K', 8n, '32M'],
    ['1T', '512', 8n, '16G'],
    ['1T', '4K', 8n, '2G'],
    ['1T', '64K', 8n, '128M'],
    ['1T', '1M', 8n, '8M'],
    ['1T', '2M', 8n, '4M'],
    ['1T', '64K', 16n, '256M'],
  ];
  for (const [virtual, cluster, entryBytes, full] of table) {
    it(`${COMMON}/${CACHE} ${virtual} at ${cluster} clusters, ${entryBytes}-byte entries -> ${full}`, () => {
      const extended = entryBytes === 16n;
      assert.equal(l2EntryBytes(extended), entryBytes);
      const cache = l2FullCoverage(size(virtual), size(cluster), extended);
      assert.equal(cache, size(full));
      // and that cache, read back through the coverage formula, maps the whole disk exactly
      assert.equal(l2CoveredBytes(cache, size(cluster), extended), size(virtual));
    });
  }
});

describe('sizing: worked examples', () => {
  it(`${CACHE} 1280 MiB at 64 KiB clusters: 160 KiB of entries, 192 KiB of whole-table cache, 3 tables`, () => {
    const virtual = 1280n * MiB;
    const cluster = 64n * KiB;
    assert.equal(dataClusters(virtual, cluster) * l2EntryBytes(false), 160n * KiB);
    assert.equal(l2FullCoverage(virtual, cluster, false), 192n * KiB);
    assert.equal(l2Tables(virtual, cluster, false), 3n);
    assert.equal(l2FullCoverage(virtual, cluster, false) / cluster, 3n);
  });
  it(`${SPEC} 1 MiB clusters, 8-byte entries: one L2 table maps 128 GiB; a 512 GiB disk has exactly four`, () => {
    assert.equal(entriesPerL2Table(MiB, false), 131072n);
    assert.equal(guestBytesPerL2Table(MiB, false), 128n * GiB);
    assert.equal(l2Tables(512n * GiB, MiB, false), 4n);
    assert.equal(l1Entries(512n * GiB, MiB, false), 4n);
    assert.equal(l2Tables(512n * GiB + 1n, MiB, false), 5n);
  });
  it(`${CACHE} the default refcount cache, 4 clusters of 64 KiB = 256 KiB, with 16-bit refcounts covers 8 GiB`, () => {
    const cache = minimumRefcountCache(64n * KiB);
    assert.equal(cache, 256n * KiB);
    assert.equal(refcountCoveredBytes(cache, 64n * KiB, 16n), 8n * GiB);
    assert.equal(refcountCoveredBytes(cache, 64n * KiB), 8n * GiB); // 16 bits is the default width [SPEC]
  });
});

describe('sizing: geometry [SPEC]', () => {
  it(`${SPEC} entries per L2 table = cluster / 8, and one table is one cluster`, () => {
    for (const cluster of ALL_CLUSTERS) {
      assert.equal(entriesPerL2Table(cluster, false) * 8n, cluster);
      assert.equal(guestBytesPerL2Table(cluster, false), (cluster * cluster) / 8n);
    }
    assert.equal(entriesPerL2Table(64n * KiB, false), 8192n);
    assert.equal(guestBytesPerL2Table(64n * KiB, false), 512n * MiB);
  });
  it(`${SPEC} a refcount block is one cluster and counts cluster * 8 / refcount_bits host clusters`, () => {
    assert.equal(refcountEntriesPerBlock(64n * KiB, 16n), 32768n);
    assert.equal(refcountEntriesPerBlock(64n * KiB), 32768n);
    assert.equal(refcountEntriesPerBlock(64n * KiB, 1n), 524288n);
    assert.equal(refcountEntriesPerBlock(64n * KiB, 64n), 8192n);
    assert.equal(refcountEntriesPerBlock(512n, 64n), 64n);
  });
  it(`${CACHE} refcount coverage = R * cluster * 8 / refcount_bits for every allowed width`, () => {
    for (let order = 0n; order <= 6n; order++) {
      const bits = 1n << order;
      assert.equal(refcountCoveredBytes(256n * KiB, 64n * KiB, bits), (256n * KiB * 64n * KiB * 8n) / bits);
    }
    assert.equal(refcountCoveredBytes(256n * KiB, 64n * KiB, 64n), 2n * GiB);
  });
  it(`${SPEC} data clusters round up: a partial last cluster still needs an L2 entry`, () => {
    assert.equal(dataClusters(64n * KiB, 64n * KiB), 1n);
    assert.equal(dataClusters(64n * KiB + 1n, 64n * KiB), 2n);
    assert.equal(dataClusters(1n, 2n * MiB), 1n);
    assert.equal(l2FullCoverage(1n, 64n * KiB, false), 64n * KiB); // one entry still takes one whole table
  });
});

describe('sizing: extended L2 [SPEC]', () => {
  it(`${SPEC} an extended entry is 16 bytes and a cluster has 32 subclusters`, () => {
    assert.equal(l2EntryBytes(true), 16n);
    assert.equal(l2EntryBytes(false), 8n);
    assert.equal(SUBCLUSTERS_PER_CLUSTER, 32n);
    assert.equal(subclusterSize(64n * KiB), 2n * KiB);
    assert.equal(subclusterSize(16n * KiB), 512n);
    assert.equal(entriesPerL2Table(64n * KiB, true), 4096n);
    assert.equal(guestBytesPerL2Table(64n * KiB, true), 256n * MiB);
  });
  it(`${SPEC} extended L2 needs clusters of at least 16 KiB (subclusters of at least 512 B)`, () => {
    for (const cluster of ALL_CLUSTERS) {
      const outcome = checkExtendedL2(cluster, true);
      if (cluster >= 16n * KiB) assert.equal(valueOf(outcome), true, `${cluster}`);
      else assertErrorMentions(outcome, 'at least 16 KiB', `${cluster / KiB > 0n ? `${cluster / KiB} KiB` : `${cluster} B`}`);
      assert.equal(valueOf(checkExtendedL2(cluster, false)), false); // standard entries fit every cluster
    }
    assertErrorMentions(checkExtendedL2(8n * KiB, true), 'the cluster size is 8 KiB');
  });
});

describe('sizing: validation names the value and the allowed range', () => {
  it(`${SPEC} cluster sizes are powers of two from 512 B to 2 MiB (cluster_bits 9..21)`, () => {
    for (const cluster of ALL_CLUSTERS) assert.equal(valueOf(checkClusterSize(cluster)), cluster);
    const bad: [bigint, string][] = [
      [0n, '0'], [256n, '256'], [4n * MiB, '4194304'], [48n * KiB, '49152'], [65535n, '65535'], [3n, '3'], [-512n, '-512'],
    ];
    for (const [cluster, named] of bad) {
      assertErrorMentions(checkClusterSize(cluster), `cluster size ${named}`, 'power of two', '512 B', '2 MiB');
    }
  });
  it(`${CACHE} a slice is a power of two, at least 512 B, at most the cluster`, () => {
    assert.equal(valueOf(checkSlice(4n * KiB, 64n * KiB)), 4n * KiB);
    assert.equal(valueOf(checkSlice(512n, 512n)), 512n);
    assert.equal(valueOf(checkSlice(64n * KiB, 64n * KiB)), 64n * KiB);
    assertErrorMentions(checkSlice(256n, 64n * KiB), '256', 'power of two', 'at least 512 B');
    assertErrorMentions(checkSlice(3000n, 64n * KiB), '3000', 'power of two');
    assertErrorMentions(checkSlice(128n * KiB, 64n * KiB), '128 KiB', 'larger than the cluster', '64 KiB', 'at most the cluster size');
  });
  it(`${SPEC} refcount_bits = 1 << refcount_order: 1..64, powers of two`, () => {
    for (let order = 0n; order <= 6n; order++) assert.equal(valueOf(checkRefcountBits(1n << order)), 1n << order);
    for (const bits of [0n, 3n, 12n, 128n]) {
      assertErrorMentions(checkRefcountBits(bits), `refcount width ${bits}`, '1, 2, 4, 8, 16, 32 or 64');
    }
  });
});

describe('sizing: slices, alignment and minimums [CACHE]', () => {
  it(`${CACHE} a 4 KiB slice of 64 KiB-cluster L2 table maps 512 entries = 32 MiB`, () => {
    assert.equal(guestBytesPerCacheEntry(64n * KiB, false, 4n * KiB), 32n * MiB);
    assert.equal(guestBytesPerCacheEntry(64n * KiB, false), guestBytesPerL2Table(64n * KiB, false));
    assert.equal(guestBytesPerCacheEntry(64n * KiB, true, 4n * KiB), 16n * MiB);
  });
  it(`${CACHE} full coverage rounds up to whole slices, not whole tables, when a slice is set`, () => {
    // 1280 MiB at 64 KiB: 160 KiB of entries is already a whole number of 4 KiB slices
    assert.equal(l2FullCoverage(1280n * MiB, 64n * KiB, false, 4n * KiB), 160n * KiB);
    // 1 GiB + 64 KiB: 16385 entries = 131080 B -> 33 slices of 4 KiB = 132 KiB, vs 3 whole tables = 192 KiB
    assert.equal(l2FullCoverage(GiB + 64n * KiB, 64n * KiB, false, 4n * KiB), 132n * KiB);
    assert.equal(l2FullCoverage(GiB + 64n * KiB, 64n * KiB, false), 192n * KiB);
    // the smallest slice still rounds: one entry -> one 512-byte slice
    assert.equal(l2FullCoverage(1n, 64n * KiB, false, 512n), 512n);
  });
  it(`${CACHE} only whole cache entries cover anything`, () => {
    assert.equal(l2CoveredBytes(64n * KiB - 1n, 64n * KiB, false), 0n);
    assert.equal(l2CoveredBytes(64n * KiB, 64n * KiB, false), 512n * MiB);
    assert.equal(l2CoveredBytes(100n * KiB, 64n * KiB, false), 512n * MiB);
    assert.equal(l2CoveredBytes(100n * KiB, 64n * KiB, false, 4n * KiB), 25n * 32n * MiB);
  });
  it(`${CACHE} cache sizes must be multiples of the cluster (or of the cache entry size)`, () => {
    assert.ok(isAligned(192n * KiB, 64n * KiB));
    assert.ok(!isAligned(160n * KiB, 64n * KiB));
    assert.ok(isAligned(160n * KiB, 4n * KiB));
    assert.ok(isAligned(0n, 64n * KiB));
  });
  it(`${CACHE} minimums: the L2 cache holds at least 2 entries, the refcount cache at least 4 clusters`, () => {
    assert.equal(minimumL2Cache(64n * KiB), 128n * KiB);
    assert.equal(minimumL2Cache(4n * KiB), 8n * KiB);
    assert.equal(minimumL2Cache(2n * MiB), 4n * MiB);
    assert.equal(minimumRefcountCache(64n * KiB), 256n * KiB);
    assert.equal(minimumRefcountCache(2n * MiB), 8n * MiB);
    assert.equal(minimumRefcountCache(512n), 2n * KiB);
  });
});

describe('sizing: first-write amplification (common practice)', () => {
  it(`${COMMON} a small write w into a fresh cluster c moves c bytes: amplification c / w`, () => {
    const a = writeAmplification(4n * KiB, 64n * KiB, false);
    assert.deepEqual(a, { unit: 64n * KiB, bytesMoved: 64n * KiB, ratio: 16 });
    assert.equal(writeAmplification(4n * KiB, 2n * MiB, false).ratio, 512);
    assert.equal(writeAmplification(512n, 512n, false).ratio, 1);
  });
  it(`${COMMON}/${SPEC} with subclusters the unit is c / 32: amplification c / 32 / w`, () => {
    const a = writeAmplification(4n * KiB, 2n * MiB, true);
    assert.deepEqual(a, { unit: 64n * KiB, bytesMoved: 64n * KiB, ratio: 16 });
    const b = writeAmplification(512n, 64n * KiB, true);
    assert.deepEqual(b, { unit: 2n * KiB, bytesMoved: 2n * KiB, ratio: 4 });
    // a write of at least a subcluster fills only the subclusters it touches
    assert.equal(writeAmplification(4n * KiB, 64n * KiB, true).ratio, 1);
  });
  it(`${COMMON} an uneven ratio is shown to two decimals (within 0.01 of bytes moved / request)`, () => {
    const a = writeAmplification(3n, 512n, false);
    assert.equal(a.bytesMoved, 512n);
    assert.ok(Math.abs(a.ratio - 512 / 3) < 0.01, `${a.ratio}`);
  });
  it(`${COMMON} property: bytes moved is the request rounded up to the unit; ratio c/w when w divides the unit`, () => {
    fc.assert(fc.property(extendedClusterArb, fc.boolean(), fc.integer({ min: 9, max: 21 }), (cluster, extended, requestBits) => {
      const request = 1n << BigInt(requestBits);
      const unit = extended ? cluster / 32n : cluster;
      const a = writeAmplification(request, cluster, extended);
      assert.equal(a.unit, unit);
      assert.ok(a.bytesMoved >= request && a.bytesMoved % unit === 0n && a.bytesMoved - request < unit);
      assert.equal(a.ratio, request <= unit ? Number(unit / request) : 1);
    }));
  });
});

describe('sizing: properties of the coverage formulas', () => {
  it(`${CACHE} full coverage covers the virtual size and is the smallest entry-aligned cache that does`, () => {
    fc.assert(fc.property(virtualSizeArb, clusterAndSliceArb(clusterArb), fc.boolean(), (virtual, [cluster, slice], wantExtended) => {
      const extended = wantExtended && cluster >= 16n * KiB;
      for (const entry of [cluster, slice]) {
        const full = l2FullCoverage(virtual, cluster, extended, entry);
        assert.ok(isAligned(full, entry), 'aligned to whole cache entries');
        assert.ok(l2CoveredBytes(full, cluster, extended, entry) >= virtual, 'covers the disk');
        assert.ok(l2CoveredBytes(full - entry, cluster, extended, entry) < virtual, 'one entry less does not');
        // the bytes of the entries themselves fit, with less than one cache entry of rounding
        const entriesBytes = dataClusters(virtual, cluster) * l2EntryBytes(extended);
        assert.ok(full >= entriesBytes && full - entriesBytes < entry);
      }
    }));
  });

  it(`${CACHE} coverage grows monotonically with the cache size (L2 and refcount)`, () => {
    fc.assert(fc.property(
      fc.bigInt({ min: 0n, max: 2n ** 40n }), fc.bigInt({ min: 0n, max: 2n ** 40n }),
      clusterAndSliceArb(clusterArb), fc.boolean(), fc.integer({ min: 0, max: 6 }),
      (a, b, [cluster, slice], wantExtended, order) => {
        const [small, large] = a <= b ? [a, b] : [b, a];
        const extended = wantExtended && cluster >= 16n * KiB;
        assert.ok(l2CoveredBytes(small, cluster, extended, slice) <= l2CoveredBytes(large, cluster, extended, slice));
        assert.ok(l2CoveredBytes(small, cluster, extended) <= l2CoveredBytes(large, cluster, extended));
        const bits = 1n << BigInt(order);
        assert.ok(refcountCoveredBytes(small, cluster, bits) <= refcountCoveredBytes(large, cluster, bits));
      },
    ));
  });

  it(`${SPEC}/${CACHE} extended L2: entry bytes double; full coverage at least the standard one, at most double`, () => {
    // What holds exactly: the entry bytes (clusters * 16 vs clusters * 8) double. After rounding
    // both up to whole cache entries of size s, std <= ext <= 2 * std, and ext >= 2 * std - s
    // (within one cache entry of double). Exactly double whenever clusters * 8 is a multiple of s.
    fc.assert(fc.property(virtualSizeArb, clusterAndSliceArb(extendedClusterArb), (virtual, [cluster, slice]) => {
      assert.equal(l2EntryBytes(true), 2n * l2EntryBytes(false));
      const clusters = dataClusters(virtual, cluster);
      for (const entry of [cluster, slice]) {
        const standard = l2FullCoverage(virtual, cluster, false, entry);
        const extended = l2FullCoverage(virtual, cluster, true, entry);
        assert.ok(extended >= standard, 'at least the standard need');
        assert.ok(extended <= 2n * standard, 'at most double');
        assert.ok(extended + entry >= 2n * standard, 'within one cache entry of double');
        if ((clusters * 8n) % entry === 0n) assert.equal(extended, 2n * standard, 'exactly double when no rounding');
        // the same cache covers half as much guest disk with extended entries
        assert.equal(2n * l2CoveredBytes(standard, cluster, true, entry), l2CoveredBytes(standard, cluster, false, entry));
      }
      assert.equal(2n * l2Tables(virtual, cluster, false) >= l2Tables(virtual, cluster, true), true);
    }));
  });

  it(`${SPEC} extended L2 leaves refcounts alone: refcount coverage has no L2 entry-size input`, () => {
    // refcountCoveredBytes takes no entry width; the refcount block geometry [SPEC] depends only on
    // the cluster and refcount_bits. (Cache-level refcount defaults are checked in cache.test.ts.)
    fc.assert(fc.property(fc.bigInt({ min: 0n, max: 2n ** 40n }), clusterArb, fc.integer({ min: 0, max: 6 }), (cache, cluster, order) => {
      const bits = 1n << BigInt(order);
      assert.equal(refcountCoveredBytes(cache, cluster, bits), (cache * cluster * 8n) / bits);
    }));
  });

  it(`${SPEC} exactness for huge sizes: 2^61 bytes at every cluster size, no float rounding`, () => {
    const virtual = 2n ** 61n;
    for (const cluster of ALL_CLUSTERS) {
      const bits = BigInt(cluster.toString(2).length - 1);
      // 2^61 / 2^bits entries of 8 bytes, already whole tables: exactly 2^(64 - bits)
      assert.equal(l2FullCoverage(virtual, cluster, false), 1n << (64n - bits));
      assert.equal(l2Tables(virtual, cluster, false), 1n << (61n - (2n * bits - 3n)));
      assert.equal(l2CoveredBytes(l2FullCoverage(virtual, cluster, false), cluster, false), virtual);
    }
    // one byte more needs one more entry, and the rounding is to a whole extra table
    assert.equal(l2FullCoverage(virtual + 1n, 64n * KiB, false), (1n << 48n) + 64n * KiB);
    assert.equal(Number(virtual + 1n), Number(virtual)); // a float could not have told these apart
  });
});
