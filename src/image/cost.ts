// What an image costs the caches, grouped the way `inspect` (text and JSON) and the image viewer
// show it: layout (fixed at creation), allocation (what the tables hold now), caches (what the L2
// and refcount caches need for it) and, over a backing chain, the sum a machine pays for all layers.
// Pure: the numbers come from the reader's report and src/core's cache sizing (docs/sources.md).
import { layerCache, sizeChain, type CacheSettings, type LayerGeometry } from '../core/cache';
import { driverProfile, type DriverProfile } from '../core/profiles';
import { l2EntryBytes, refcountCoveredBytes, SUBCLUSTERS_PER_CLUSTER } from '../core/sizing';
import type { ImageReport } from './report';

/** Fixed when the image was created. */
export interface LayoutGroup {
  formatVersion: 2 | 3;
  virtualSize: bigint;
  clusterSize: bigint;
  /** Bytes per L2 entry: 8, or 16 with extended L2 [SPEC]. */
  l2EntryWidth: number;
  /** Allocation units per cluster: 1, or 32 with extended L2 [SPEC]. */
  subclusters: number;
  /** Bits per refcount entry. */
  refcountWidth: number;
}

/** The allocation map: the virtual disk cut into cells of `cellBytes`, each with its stored share. */
export interface AllocationMapGroup {
  cellBytes: bigint;
  /** Per cell, 0..1: share stored in this layer. */
  data: number[];
  /** Per cell, 0..1: share reading as zeros through a zero flag. */
  zero: number[];
}

/** What the tables hold now (null until the metadata walk has counted it). */
export interface AllocationGroup {
  l1Entries: number;
  l2Tables: number | null;
  dataClusters: number | null;
  compressedClusters: number | null;
  zeroClusters: number | null;
  subclustersAllocated: number | null;
  subclustersZero: number | null;
  /** Guest bytes stored in this layer. */
  storedBytes: bigint | null;
  /** storedBytes / virtual size, 0..1. */
  storedShare: number | null;
  map: AllocationMapGroup | null;
}

/** One way of sizing a layer's caches, as the driver would size them. */
export interface CacheChoice {
  l2: bigint;
  /** Guest bytes that L2 cache maps. */
  l2Covered: bigint;
  refcount: bigint;
  /** Host bytes that refcount cache covers at this image's refcount width. */
  refcountCovered: bigint;
}

export interface CachesGroup {
  /** An L2 cache holding every L2 table present now (null until counted). */
  l2Allocated: bigint | null;
  /** An L2 cache mapping the whole virtual disk (full coverage). */
  l2WholeDisk: bigint;
  /** What the driver gives the L2 cache when nothing is set, under `profile`. */
  l2Default: bigint;
  /** The refcount cache the driver gives this layer under `profile`. */
  refcountDefault: bigint;
  choices: { allocated: CacheChoice | null; wholeDisk: CacheChoice; default: CacheChoice };
}

export interface LayerCost {
  layout: LayoutGroup;
  allocation: AllocationGroup;
  caches: CachesGroup;
}

/** Every layer has caches of its own; a machine opening the image pays their sum, per choice. */
export interface ChainCost {
  /** Null until every sized layer was counted. */
  allocated: bigint | null;
  wholeDisk: bigint;
  default: bigint;
  /** qcow2 layers with numbers, of all layers in the chain. */
  layersSized: number;
  layers: number;
}

function geometryOf(report: ImageReport): LayerGeometry | null {
  if (report.format !== 'qcow2' || report.virtualSize === null || report.clusterSize === null || report.extendedL2 === null) return null;
  return {
    virtualSize: report.virtualSize,
    clusterSize: report.clusterSize,
    extendedL2: report.extendedL2,
    refcountBits: report.refcountBits === null ? undefined : BigInt(report.refcountBits),
  };
}

/** The settings behind each choice: an explicit L2 size, the refcount cache left to the driver. */
function settingsFor(report: ImageReport): { allocated: CacheSettings | null; wholeDisk: CacheSettings; default: CacheSettings } {
  return {
    allocated: report.l2AllocatedCoverage === null ? null : { l2Cache: report.l2AllocatedCoverage },
    wholeDisk: { l2Cache: report.l2FullCoverage ?? 0n },
    default: {},
  };
}

function choice(geometry: LayerGeometry, settings: CacheSettings, profile: DriverProfile): CacheChoice {
  const cache = layerCache(geometry, settings, profile);
  return { l2: cache.l2, l2Covered: cache.l2Covered, refcount: cache.refcount, refcountCovered: refcountCoveredBytes(cache.refcount, geometry.clusterSize, geometry.refcountBits) };
}

/** The three groups of one layer; null for a layer that is not a readable qcow2 image. */
export function layerCost(report: ImageReport, profile: DriverProfile = driverProfile()): LayerCost | null {
  const geometry = geometryOf(report);
  if (!geometry || report.version === null) return null;
  const settings = settingsFor(report);
  const choices = {
    allocated: settings.allocated ? choice(geometry, settings.allocated, profile) : null,
    wholeDisk: choice(geometry, settings.wholeDisk, profile),
    default: choice(geometry, settings.default, profile),
  };
  const stored = report.allocatedBytes;
  return {
    layout: {
      formatVersion: report.version,
      virtualSize: geometry.virtualSize,
      clusterSize: geometry.clusterSize,
      l2EntryWidth: Number(l2EntryBytes(geometry.extendedL2)),
      subclusters: geometry.extendedL2 ? Number(SUBCLUSTERS_PER_CLUSTER) : 1,
      refcountWidth: report.refcountBits ?? 16,
    },
    allocation: {
      l1Entries: report.l1Entries ?? 0,
      l2Tables: report.l2TablesAllocated,
      dataClusters: report.dataClustersAllocated,
      compressedClusters: report.compressedClusters,
      zeroClusters: report.zeroClusters,
      subclustersAllocated: report.subclustersAllocated,
      subclustersZero: report.subclustersZero,
      storedBytes: stored,
      storedShare: stored === null || geometry.virtualSize === 0n ? null : Number((stored * 1_000_000n) / geometry.virtualSize) / 1_000_000,
      map: report.allocation ? { cellBytes: report.allocation.regionBytes, data: [...report.allocation.data], zero: [...report.allocation.zero] } : null,
    },
    caches: {
      l2Allocated: report.l2AllocatedCoverage,
      l2WholeDisk: report.l2FullCoverage ?? choices.wholeDisk.l2,
      l2Default: choices.default.l2,
      refcountDefault: choices.default.refcount,
      choices,
    },
  };
}

/** The caches a machine pays for the image and every backing layer, per choice ([CACHE]: per layer). */
export function chainCost(layers: readonly ImageReport[], profile: DriverProfile = driverProfile()): ChainCost | null {
  const sized = layers.map((r) => ({ report: r, geometry: geometryOf(r) })).filter((l): l is { report: ImageReport; geometry: LayerGeometry } => l.geometry !== null);
  if (sized.length === 0) return null;
  const total = (pick: (r: ImageReport) => CacheSettings) => sizeChain(sized.map((l) => ({ geometry: l.geometry, settings: pick(l.report) })), profile).report.cacheMemoryTotal;
  const allCounted = sized.every((l) => l.report.l2AllocatedCoverage !== null);
  return {
    allocated: allCounted ? total((r) => settingsFor(r).allocated ?? {}) : null,
    wholeDisk: total((r) => settingsFor(r).wholeDisk),
    default: total(() => ({})),
    layersSized: sized.length,
    layers: layers.length,
  };
}
