// The caches a disk really gets: the combined-cache split, minimums, alignment, the driver-default
// profiles and a backing chain's memory, against the published cache notes ([CACHE], docs/sources.md).
import { strict as assert } from 'node:assert';
import fc from 'fast-check';
import { cacheOptionsProblems, layerCache, sizeChain, type CacheSettings, type LayerGeometry } from '../../src/core/cache';
import { driverProfile, RECOMMENDED_CLEANUP_INTERVAL } from '../../src/core/profiles';
import { l2FullCoverage, minimumL2Cache, minimumRefcountCache } from '../../src/core/sizing';
import { CACHE, CONTRACT, SPEC } from '../helpers/sources';

const KiB = 1024n;
const MiB = 1024n * KiB;
const GiB = 1024n * MiB;
const TiB = 1024n * GiB;

const disk = (virtualSize: bigint, clusterSize = 64n * KiB, extendedL2 = false): LayerGeometry => ({ virtualSize, clusterSize, extendedL2 });
const linux = driverProfile('current', 'linux');
const other = driverProfile('current', 'other');
const legacyLinux = driverProfile('legacy', 'linux');
const legacyOther = driverProfile('legacy', 'other');
/** 20 GiB at 64 KiB: full coverage 2.5 MiB (docs/sources.md check table), minimum refcount cache 256 KiB. */
const twentyGiB = disk(20n * GiB);

describe('cache: at most two of the three knobs [CACHE]', () => {
  it(`${CACHE} L2, refcount and combined all set is a conflict, with a message saying so`, () => {
    assert.deepEqual(cacheOptionsProblems({ l2Cache: MiB, refcountCache: MiB, combinedCache: 4n * MiB }), [{ kind: 'all-three-set' }]);
  });
  it(`${CACHE} any two, any one or none are accepted`, () => {
    const accepted: CacheSettings[] = [
      {}, { l2Cache: MiB }, { refcountCache: MiB }, { combinedCache: MiB },
      { l2Cache: MiB, refcountCache: MiB }, { l2Cache: MiB, combinedCache: 4n * MiB }, { refcountCache: MiB, combinedCache: 4n * MiB },
    ];
    for (const settings of accepted) assert.deepEqual(cacheOptionsProblems(settings), [], JSON.stringify(settings, (_k, v: unknown) => (typeof v === 'bigint' ? String(v) : v)));
  });
  it(`${CACHE} a part larger than the combined size is refused`, () => {
    assert.deepEqual(cacheOptionsProblems({ l2Cache: 8n * MiB, combinedCache: 4n * MiB }), [{ kind: 'part-above-combined', part: 'l2Cache' }]);
    assert.deepEqual(cacheOptionsProblems({ refcountCache: 8n * MiB, combinedCache: 4n * MiB }), [{ kind: 'part-above-combined', part: 'refcountCache' }]);
    assert.deepEqual(cacheOptionsProblems({ l2Cache: 4n * MiB, combinedCache: 4n * MiB }), [], 'equal to the combined size is allowed');
  });
});

describe('cache: the combined-cache split [CACHE]', () => {
  it(`${CACHE} only the combined size: L2 takes what it can use (full coverage), the rest goes to refcount`, () => {
    const c = layerCache(twentyGiB, { combinedCache: 4n * MiB }, linux);
    assert.equal(c.l2, 2560n * KiB);
    assert.equal(c.refcount, 1536n * KiB);
    assert.equal(c.l2Source, 'combined');
    assert.equal(c.refcountSource, 'combined');
    assert.equal(c.l2Covered, 20n * GiB);
  });
  it(`${CACHE} only the combined size, too small for full coverage: refcount keeps its minimum, L2 the rest`, () => {
    const c = layerCache(twentyGiB, { combinedCache: 2n * MiB }, linux);
    assert.equal(c.refcount, 256n * KiB);
    assert.equal(c.l2, 1792n * KiB);
    assert.equal(c.l2 + c.refcount, 2n * MiB);
    // exactly full coverage + minimum refcount: both branches agree
    const edge = layerCache(twentyGiB, { combinedCache: 2560n * KiB + 256n * KiB }, linux);
    assert.deepEqual([edge.l2, edge.refcount], [2560n * KiB, 256n * KiB]);
  });
  it(`${CACHE} combined + L2: refcount gets the difference`, () => {
    const c = layerCache(twentyGiB, { combinedCache: 4n * MiB, l2Cache: MiB }, linux);
    assert.deepEqual([c.l2, c.l2Source, c.refcount, c.refcountSource], [MiB, 'configured', 3n * MiB, 'combined']);
  });
  it(`${CACHE} combined + refcount: L2 gets the difference`, () => {
    const c = layerCache(twentyGiB, { combinedCache: 3n * MiB, refcountCache: MiB }, linux);
    assert.deepEqual([c.l2, c.l2Source, c.refcount, c.refcountSource], [2n * MiB, 'combined', MiB, 'configured']);
  });
  it(`${CACHE} all three: a conflict for cacheOptionsProblems; layerCache still gives numbers (L2 and refcount win)`, () => {
    const settings = { l2Cache: MiB, refcountCache: 512n * KiB, combinedCache: 8n * MiB };
    assert.deepEqual(cacheOptionsProblems(settings), [{ kind: 'all-three-set' }]);
    const c = layerCache(twentyGiB, settings, linux);
    assert.deepEqual([c.l2, c.refcount], [MiB, 512n * KiB]);
  });

  it(`${CACHE} property: only the combined size set (cluster-aligned): L2 = min(full coverage, total - refcount minimum), all of it used`, () => {
    fc.assert(fc.property(
      fc.bigInt({ min: 1n, max: 4n * TiB }), fc.integer({ min: 9, max: 21 }), fc.bigInt({ min: 6n, max: 4096n }),
      (virtual, bits, clusters) => {
        const cluster = 1n << BigInt(bits);
        const total = clusters * cluster; // at least 2 L2 entries + 4 refcount clusters
        const c = layerCache(disk(virtual, cluster), { combinedCache: total }, linux);
        const usable = l2FullCoverage(virtual, cluster, false) > minimumL2Cache(cluster)
          ? l2FullCoverage(virtual, cluster, false) : minimumL2Cache(cluster);
        const l2Want = total - minimumRefcountCache(cluster);
        assert.equal(c.l2, l2Want < usable ? l2Want : usable);
        assert.equal(c.l2 + c.refcount, total);
        assert.ok(c.refcount >= minimumRefcountCache(cluster));
      },
    ));
  });
  it(`${CACHE} property: with a slice set, the split still uses the whole combined size, plus less than one cluster of rounding`, () => {
    fc.assert(fc.property(
      fc.bigInt({ min: 1n, max: 4n * TiB }), fc.integer({ min: 9, max: 21 }), fc.integer({ min: 0, max: 12 }), fc.bigInt({ min: 6n, max: 4096n }),
      (virtual, bits, sliceShift, clusters) => {
        const cluster = 1n << BigInt(bits);
        const slice = 1n << BigInt(Math.max(9, bits - sliceShift));
        const total = clusters * cluster;
        const c = layerCache(disk(virtual, cluster), { combinedCache: total, entrySize: slice }, linux);
        assert.equal(c.l2 % slice, 0n);
        assert.equal(c.refcount % cluster, 0n, 'the refcount cache always uses whole clusters');
        assert.ok(c.l2 + c.refcount >= total && c.l2 + c.refcount < total + cluster);
      },
    ));
  });
});

describe('cache: minimums, alignment and the full-coverage cap [CACHE]', () => {
  it(`${CACHE} a configured L2 cache below 2 entries is raised to 2 entries (tables or slices)`, () => {
    assert.equal(layerCache(twentyGiB, { l2Cache: 64n * KiB }, linux).l2, 128n * KiB);
    assert.equal(layerCache(twentyGiB, { l2Cache: 4n * KiB, entrySize: 4n * KiB }, linux).l2, 8n * KiB);
    assert.equal(layerCache(twentyGiB, { l2Cache: 0n }, linux).l2, 128n * KiB);
  });
  it(`${CACHE} a configured refcount cache below 4 clusters is raised to 4 clusters`, () => {
    assert.equal(layerCache(twentyGiB, { refcountCache: 64n * KiB }, linux).refcount, 256n * KiB);
    assert.equal(layerCache(disk(20n * GiB, 2n * MiB), { refcountCache: MiB }, linux).refcount, 8n * MiB);
  });
  it(`${CACHE} caches are whole entries: an unaligned configured size rounds up to the next entry`, () => {
    assert.equal(layerCache(twentyGiB, { l2Cache: 1000n * KiB }, linux).l2, 1024n * KiB);
    assert.equal(layerCache(twentyGiB, { l2Cache: 1001n * KiB, entrySize: 4n * KiB }, linux).l2, 1004n * KiB);
    assert.equal(layerCache(twentyGiB, { refcountCache: 300n * KiB }, linux).refcount, 320n * KiB);
  });
  it(`${CONTRACT} a configured L2 cache above full coverage is used only up to full coverage`, () => {
    const c = layerCache(twentyGiB, { l2Cache: 64n * MiB }, linux);
    assert.equal(c.l2, 2560n * KiB);
    assert.equal(c.l2Capped, true);
    assert.equal(c.l2Covered, 20n * GiB);
    assert.equal(layerCache(twentyGiB, { l2Cache: MiB }, linux).l2Capped, false);
  });
  it(`${CACHE} a disk smaller than one table still gets the 2-entry minimum; coverage is capped at the disk`, () => {
    const c = layerCache(disk(512n * MiB), {}, linux);
    assert.equal(c.l2FullCoverage, 64n * KiB);
    assert.equal(c.l2, 128n * KiB);
    assert.equal(c.l2Covered, 512n * MiB);
  });
  it(`${CACHE} property: L2 is whole entries, at least 2 of them, never above what the disk can use; refcount whole clusters, at least 4`, () => {
    const profiles = [linux, other, legacyLinux, legacyOther];
    fc.assert(fc.property(
      fc.bigInt({ min: 1n, max: 2n ** 50n }), fc.integer({ min: 9, max: 21 }), fc.integer({ min: 0, max: 12 }),
      fc.option(fc.bigInt({ min: 0n, max: 2n ** 32n })), fc.option(fc.bigInt({ min: 0n, max: 2n ** 32n })),
      fc.constantFrom(...profiles),
      (virtual, bits, sliceShift, l2Cache, refcountCache, profile) => {
        const cluster = 1n << BigInt(bits);
        const entrySize = 1n << BigInt(Math.max(9, bits - sliceShift));
        const settings: CacheSettings = { entrySize };
        if (l2Cache !== null) settings.l2Cache = l2Cache;
        if (refcountCache !== null) settings.refcountCache = refcountCache;
        const c = layerCache(disk(virtual, cluster), settings, profile);
        const usable = c.l2FullCoverage > 2n * entrySize ? c.l2FullCoverage : 2n * entrySize;
        assert.equal(c.l2 % entrySize, 0n);
        assert.ok(c.l2 >= 2n * entrySize && c.l2 <= usable);
        assert.equal(c.refcount % cluster, 0n);
        assert.ok(c.refcount >= 4n * cluster);
        assert.ok(c.l2Covered <= virtual);
      },
    ));
  });
});

describe('cache: driver defaults by generation and platform (docs/sources.md, from [CACHE])', () => {
  it(`${CACHE} current/linux: L2 up to 32 MiB, never above full coverage; refcount 4 clusters; cleanup 600 s`, () => {
    const big = layerCache(disk(TiB), {}, linux);
    assert.deepEqual([big.l2, big.refcount, big.cleanupInterval, big.l2Source], [32n * MiB, 256n * KiB, 600, 'default']);
    assert.equal(big.l2Covered, 256n * GiB); // 32 MiB of 64 KiB-cluster tables maps 256 GiB (check table)
    const small = layerCache(twentyGiB, {}, linux);
    assert.equal(small.l2, 2560n * KiB);
    assert.equal(layerCache(disk(256n * GiB), {}, linux).l2, 32n * MiB);
  });
  it(`${CACHE} current/other: L2 up to 8 MiB, never above full coverage; refcount 4 clusters; cleanup off`, () => {
    const big = layerCache(disk(TiB), {}, other);
    assert.deepEqual([big.l2, big.refcount, big.cleanupInterval], [8n * MiB, 256n * KiB, 0]);
    assert.equal(layerCache(twentyGiB, {}, other).l2, 2560n * KiB);
    assert.equal(layerCache(disk(64n * GiB), {}, other).l2, 8n * MiB);
  });
  it(`${CACHE} current: the refcount default is 4 clusters of the disk's own cluster size`, () => {
    assert.equal(layerCache(disk(TiB, 2n * MiB), {}, linux).refcount, 8n * MiB);
    assert.equal(layerCache(disk(TiB, 512n), {}, other).refcount, 2n * KiB);
  });
  for (const [name, profile] of [['linux', legacyLinux], ['other', legacyOther]] as const) {
    it(`${CACHE} legacy/${name}: L2 1 MiB, refcount a quarter of it, cleanup off`, () => {
      const c = layerCache(disk(TiB, 16n * KiB), {}, profile);
      assert.deepEqual([c.l2, c.refcount, c.cleanupInterval], [MiB, 256n * KiB, 0]);
      assert.equal(layerCache(disk(TiB), {}, profile).l2, MiB);
    });
    it(`${CACHE} legacy/${name}: at least 8 clusters of L2 (from memory), refcount at least 4 clusters`, () => {
      const c = layerCache(disk(TiB, 512n * KiB), {}, profile);
      assert.equal(c.l2, 4n * MiB); // 8 clusters of 512 KiB
      assert.equal(c.refcount, 2n * MiB); // a quarter would be 1 MiB; 4 clusters is the floor
    });
  }
  it(`${CACHE} legacy with only an L2 cache configured: refcount is a quarter of it`, () => {
    assert.equal(layerCache(disk(TiB, 16n * KiB), { l2Cache: 4n * MiB }, legacyLinux).refcount, MiB);
    assert.equal(layerCache(disk(TiB, 16n * KiB), { l2Cache: 4n * MiB }, linux).refcount, 64n * KiB);
  });
  it('a configured cleanup interval wins over the profile default', () => {
    const c = layerCache(twentyGiB, { cleanupInterval: 90 }, other);
    assert.deepEqual([c.cleanupInterval, c.cleanupSource], [90, 'configured']);
    assert.equal(layerCache(twentyGiB, {}, other).cleanupSource, 'default');
  });
  it('the default profile is current/linux', () => {
    assert.equal(driverProfile().generation, 'current');
    assert.equal(driverProfile().platform, 'linux');
    assert.deepEqual(layerCache(disk(TiB), {}), layerCache(disk(TiB), {}, linux));
  });
});

describe('cache: extended L2 and refcounts', () => {
  it(`${SPEC}/${CACHE} extended L2 doubles the full-coverage need: 1 TiB at 64 KiB, 128 MiB -> 256 MiB`, () => {
    assert.equal(layerCache(disk(TiB), {}).l2FullCoverage, 128n * MiB);
    assert.equal(layerCache(disk(TiB, 64n * KiB, true), {}).l2FullCoverage, 256n * MiB);
  });
  it(`${SPEC} property (current profiles, and any configured caches): extended L2 leaves the refcount cache alone`, () => {
    fc.assert(fc.property(
      fc.bigInt({ min: 1n, max: 2n ** 50n }), fc.integer({ min: 14, max: 21 }),
      fc.option(fc.bigInt({ min: 0n, max: 2n ** 32n })), fc.option(fc.bigInt({ min: 0n, max: 2n ** 32n })),
      fc.constantFrom(linux, other),
      (virtual, bits, l2Cache, refcountCache, profile) => {
        const cluster = 1n << BigInt(bits);
        const settings: CacheSettings = {};
        if (l2Cache !== null) settings.l2Cache = l2Cache;
        if (refcountCache !== null) settings.refcountCache = refcountCache;
        const standard = layerCache(disk(virtual, cluster, false), settings, profile);
        const extended = layerCache(disk(virtual, cluster, true), settings, profile);
        assert.equal(extended.refcount, standard.refcount);
        assert.ok(extended.l2FullCoverage >= standard.l2FullCoverage && extended.l2FullCoverage <= 2n * standard.l2FullCoverage);
      },
    ));
  });
  // Reported to the lead: with the legacy profile and clusters below 64 KiB, the default refcount
  // cache is a quarter of the L2 cache *after* it is capped at full coverage, so it changes with
  // extended L2 and with the disk size. docs/sources.md's legacy defaults say "L2 cache 1 MiB ...;
  // refcount cache 1/4 of the L2 cache": 256 KiB here, whatever the disk's entry width.
  it(`${CACHE} legacy: the default refcount cache does not depend on extended L2 (1 GiB at 16 KiB clusters: 256 KiB)`, () => {
    const standard = layerCache(disk(GiB, 16n * KiB, false), {}, legacyLinux);
    const extended = layerCache(disk(GiB, 16n * KiB, true), {}, legacyLinux);
    assert.equal(extended.refcount, standard.refcount);
    assert.equal(standard.refcount, 256n * KiB);
  });
});

describe('cache: a backing chain [CACHE]', () => {
  it(`${CACHE} each layer has its own caches; the memory is the sum, each with its own cluster size`, () => {
    // top: 20 GiB at 64 KiB -> L2 2.5 MiB + refcount 256 KiB
    // base: 20 GiB at 1 MiB -> full coverage 1 MiB (one table), but 2 entries minimum = 2 MiB; refcount 4 MiB
    // base of base: 20 GiB at 4 KiB -> full 40 MiB, current/linux caps at 32 MiB; refcount 16 KiB
    const sizing = sizeChain([
      { geometry: disk(20n * GiB, 64n * KiB), settings: {} },
      { geometry: disk(20n * GiB, MiB), settings: {} },
      { geometry: disk(20n * GiB, 4n * KiB), settings: {} },
    ], linux);
    const [top, base, root] = sizing.layers;
    assert.deepEqual([top?.l2, top?.refcount], [2560n * KiB, 256n * KiB]);
    assert.deepEqual([base?.l2FullCoverage, base?.l2, base?.refcount], [MiB, 2n * MiB, 4n * MiB]);
    assert.deepEqual([root?.l2FullCoverage, root?.l2, root?.refcount], [40n * MiB, 32n * MiB, 16n * KiB]);
    assert.equal(sizing.report.layers, 3);
    assert.equal(sizing.report.cacheMemoryTotal, 2560n * KiB + 256n * KiB + 2n * MiB + 4n * MiB + 32n * MiB + 16n * KiB);
  });
  it(`${CONTRACT} the report describes the top layer; recommended is its full coverage and a cleanup interval`, () => {
    const sizing = sizeChain([
      { geometry: disk(TiB), settings: { l2Cache: MiB } },
      { geometry: disk(20n * GiB, 2n * MiB), settings: {} },
    ], other);
    assert.deepEqual(sizing.report, {
      virtualSize: TiB, clusterSize: 64n * KiB, l2EntryBytes: 8n, l2FullCoverage: 128n * MiB, l2Effective: MiB,
      l2CoveredBytes: 8n * GiB, refcountEffective: 256n * KiB, layers: 2,
      cacheMemoryTotal: MiB + 256n * KiB + 4n * MiB + 8n * MiB,
    });
    assert.deepEqual(sizing.recommended, { l2Cache: 128n * MiB, cleanupInterval: RECOMMENDED_CLEANUP_INTERVAL });
    assert.equal(RECOMMENDED_CLEANUP_INTERVAL, 600);
  });
  it(`${CONTRACT} property: the chain's memory is the sum of its layers' L2 and refcount caches`, () => {
    const layer = fc.record({ virtual: fc.bigInt({ min: 1n, max: 2n ** 44n }), bits: fc.integer({ min: 9, max: 21 }) });
    fc.assert(fc.property(fc.array(layer, { minLength: 1, maxLength: 6 }), (layers) => {
      const chain = layers.map(({ virtual, bits }) => ({ geometry: disk(virtual, 1n << BigInt(bits)), settings: {} }));
      const sizing = sizeChain(chain, linux);
      const sum = chain.reduce((s, l) => {
        const c = layerCache(l.geometry, l.settings, linux);
        return s + c.l2 + c.refcount;
      }, 0n);
      assert.equal(sizing.report.cacheMemoryTotal, sum);
      assert.equal(sizing.report.layers, chain.length);
    }));
  });
  it('an empty chain is a programming error, not a silent zero', () => {
    assert.throws(() => sizeChain([]), RangeError);
  });
});
