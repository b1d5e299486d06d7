// The caches a disk really gets: configured values, the combined-size split and the profile's
// defaults, per layer of a backing chain ([CACHE], docs/sources.md).
import {
  l2CoveredBytes, l2EntryBytes, l2FullCoverage, l2Tables, maxOf, minOf,
  minimumL2Cache, minimumRefcountCache, roundUp,
} from './sizing';
import { driverProfile, RECOMMENDED_CLEANUP_INTERVAL, type DriverProfile } from './profiles';
import type { SizingReport } from './results';

export interface LayerGeometry {
  virtualSize: bigint;
  clusterSize: bigint;
  extendedL2: boolean;
  refcountBits?: bigint;
}

/** What a definition sets for one layer's caches; absent means "the driver's default". */
export interface CacheSettings {
  l2Cache?: bigint;
  refcountCache?: bigint;
  combinedCache?: bigint;
  /** L2 cache entry size (slice); absent means whole L2 tables. */
  entrySize?: bigint;
  cleanupInterval?: number;
}

export type CacheSource = 'configured' | 'combined' | 'default';

export interface LayerCache {
  geometry: LayerGeometry;
  entrySize: bigint;
  l2FullCoverage: bigint;
  l2Tables: bigint;
  l2: bigint;
  l2Source: CacheSource;
  /** The configured (or derived) L2 was above full coverage and the driver uses only full coverage. */
  l2Capped: boolean;
  l2Covered: bigint;
  refcount: bigint;
  refcountSource: CacheSource;
  cleanupInterval: number;
  cleanupSource: 'configured' | 'default';
}

/** Why the driver refuses a set of cache sizes ([CACHE]). */
export type CacheOptionsProblem =
  | { kind: 'all-three-set' }
  | { kind: 'part-above-combined'; part: 'l2Cache' | 'refcountCache' };

/**
 * Of L2, refcount and combined cache at most two may be set together, and neither the L2 nor the
 * refcount cache may be larger than the combined size that holds them both. Empty when accepted.
 */
export function cacheOptionsProblems(settings: Pick<CacheSettings, 'l2Cache' | 'refcountCache' | 'combinedCache'>): CacheOptionsProblem[] {
  const { l2Cache, refcountCache, combinedCache } = settings;
  if (combinedCache === undefined) return [];
  if (l2Cache !== undefined && refcountCache !== undefined) return [{ kind: 'all-three-set' }];
  const parts = [['l2Cache', l2Cache], ['refcountCache', refcountCache]] as const;
  return parts.flatMap(([part, value]): CacheOptionsProblem[] => (value !== undefined && value > combinedCache ? [{ kind: 'part-above-combined', part }] : []));
}

/**
 * The caches of one layer. A conflicting combination is resolved as the driver would refuse it only
 * in cacheOptionsProblems (reported by the rules); here the first two knobs win so that every disk still gets numbers.
 */
export function layerCache(geometry: LayerGeometry, settings: CacheSettings, profile: DriverProfile = driverProfile()): LayerCache {
  const { virtualSize, clusterSize: cluster, extendedL2 } = geometry;
  const entrySize = settings.entrySize ?? cluster;
  const full = l2FullCoverage(virtualSize, cluster, extendedL2, entrySize);
  const minL2 = minimumL2Cache(entrySize);
  const minRefcount = minimumRefcountCache(cluster);
  const usableL2 = maxOf(full, minL2);

  let l2: bigint;
  let l2Source: CacheSource;
  let refcount: bigint | undefined;
  let refcountSource: CacheSource = 'default';
  const { l2Cache, refcountCache, combinedCache } = settings;
  if (l2Cache !== undefined) {
    l2 = l2Cache;
    l2Source = 'configured';
    if (refcountCache !== undefined) {
      refcount = refcountCache;
      refcountSource = 'configured';
    } else if (combinedCache !== undefined) {
      refcount = combinedCache - l2Cache;
      refcountSource = 'combined';
    }
  } else if (combinedCache !== undefined) {
    if (refcountCache !== undefined) {
      l2 = combinedCache - refcountCache;
      refcount = refcountCache;
      refcountSource = 'configured';
    } else if (combinedCache > usableL2 + minRefcount) {
      // The L2 cache takes what it can use; the refcount cache grows only after that.
      l2 = usableL2;
      refcount = combinedCache - usableL2;
      refcountSource = 'combined';
    } else {
      refcount = minRefcount;
      l2 = combinedCache - minRefcount;
      refcountSource = 'combined';
    }
    l2Source = 'combined';
  } else {
    l2 = profile.defaultL2Cache(full, cluster);
    l2Source = 'default';
    if (refcountCache !== undefined) {
      refcount = refcountCache;
      refcountSource = 'configured';
    }
  }
  // The driver allocates whole entries and never less than its minimum.
  l2 = maxOf(roundUp(maxOf(l2, 0n), entrySize), minL2);
  const l2Capped = l2 > usableL2;
  // The legacy refcount default follows the L2 cache the driver asked for, before the cap.
  const requestedL2 = l2;
  l2 = minOf(l2, usableL2);
  refcount = maxOf(roundUp(maxOf(refcount ?? profile.defaultRefcountCache(requestedL2, cluster), 0n), cluster), minRefcount);

  const configuredCleanup = settings.cleanupInterval;
  return {
    geometry,
    entrySize,
    l2FullCoverage: full,
    l2Tables: l2Tables(virtualSize, cluster, extendedL2),
    l2,
    l2Source,
    l2Capped,
    l2Covered: minOf(l2CoveredBytes(l2, cluster, extendedL2, entrySize), virtualSize),
    refcount,
    refcountSource,
    cleanupInterval: configuredCleanup ?? profile.defaultCleanupInterval,
    cleanupSource: configuredCleanup === undefined ? 'default' : 'configured',
  };
}

export interface LayerSpec {
  geometry: LayerGeometry;
  settings: CacheSettings;
}

export interface DiskSizing {
  /** The top layer first, then each backing layer. */
  layers: LayerCache[];
  report: SizingReport;
  recommended: { l2Cache: bigint; cleanupInterval: number };
}

/** Every layer has caches of its own; the memory a disk costs is their sum ([CACHE]). */
export function sizeChain(chain: readonly LayerSpec[], profile: DriverProfile = driverProfile()): DiskSizing {
  const layers = chain.map((layer) => layerCache(layer.geometry, layer.settings, profile));
  const top = layers[0];
  if (top === undefined) throw new RangeError('sizeChain needs at least one layer');
  const total = layers.reduce((sum, layer) => sum + layer.l2 + layer.refcount, 0n);
  const { geometry } = top;
  return {
    layers,
    report: {
      virtualSize: geometry.virtualSize,
      clusterSize: geometry.clusterSize,
      l2EntryBytes: l2EntryBytes(geometry.extendedL2),
      l2FullCoverage: top.l2FullCoverage,
      l2Effective: top.l2,
      l2CoveredBytes: top.l2Covered,
      refcountEffective: top.refcount,
      layers: layers.length,
      cacheMemoryTotal: total,
    },
    recommended: {
      l2Cache: maxOf(top.l2FullCoverage, minimumL2Cache(top.entrySize)),
      cleanupInterval: top.cleanupInterval > 0 ? top.cleanupInterval : RECOMMENDED_CLEANUP_INTERVAL,
    },
  };
}

