// The qcow2 metadata geometry and cache sizing of docs/sources.md. Pure and exact: every byte count is a
// bigint, every division rounds the way the format does (up, to whole entries), never through floats.
import { fail, ok, type Outcome } from './results';
import { formatSize } from './format';

export const KiB = 1024n;
export const MiB = 1024n * KiB;
export const GiB = 1024n * MiB;

/** [SPEC] cluster_bits 9..21. */
export const MIN_CLUSTER = 512n;
export const MAX_CLUSTER = 2n * MiB;
export const DEFAULT_CLUSTER = 64n * KiB;
/** [SPEC] extended L2 splits a cluster into 32 subclusters, each at least 512 B. */
export const SUBCLUSTERS_PER_CLUSTER = 32n;
export const MIN_EXTENDED_L2_CLUSTER = 16n * KiB;
export const MIN_SLICE = 512n;
/** [CACHE] the L2 cache holds at least 2 entries; the refcount cache at least 4 clusters. */
export const MIN_L2_CACHE_ENTRIES = 2n;
export const MIN_REFCOUNT_CACHE_CLUSTERS = 4n;
export const DEFAULT_REFCOUNT_BITS = 16n;

export const ceilDiv = (a: bigint, b: bigint): bigint => (a + b - 1n) / b;
export const roundUp = (a: bigint, unit: bigint): bigint => ceilDiv(a, unit) * unit;
export const isPowerOfTwo = (n: bigint): boolean => n > 0n && (n & (n - 1n)) === 0n;
export const maxOf = (a: bigint, b: bigint): bigint => (a > b ? a : b);
export const minOf = (a: bigint, b: bigint): bigint => (a < b ? a : b);

export function log2(n: bigint): number {
  let bits = 0;
  while (n > 1n) {
    n >>= 1n;
    bits++;
  }
  return bits;
}

// ---- validation: each returns the value or a message naming it and the allowed range ----

export function checkClusterSize(cluster: bigint): Outcome<bigint> {
  if (!isPowerOfTwo(cluster) || cluster < MIN_CLUSTER || cluster > MAX_CLUSTER) {
    return fail(`cluster size ${cluster} (${formatSize(cluster)}) is not allowed: it must be a power of two from 512 B to 2 MiB`);
  }
  return ok(cluster);
}

export function checkExtendedL2(cluster: bigint, extendedL2: boolean): Outcome<boolean> {
  if (extendedL2 && cluster < MIN_EXTENDED_L2_CLUSTER) {
    return fail(`extended L2 needs clusters of at least 16 KiB (subclusters of at least 512 B); the cluster size is ${formatSize(cluster)}`);
  }
  return ok(extendedL2);
}

export function checkSlice(slice: bigint, cluster: bigint): Outcome<bigint> {
  if (!isPowerOfTwo(slice) || slice < MIN_SLICE) {
    return fail(`cache entry size ${slice} (${formatSize(slice)}) is not allowed: it must be a power of two of at least 512 B`);
  }
  if (slice > cluster) {
    return fail(`cache entry size ${formatSize(slice)} is larger than the cluster (${formatSize(cluster)}); it can be at most the cluster size`);
  }
  return ok(slice);
}

export function checkRefcountBits(bits: bigint): Outcome<bigint> {
  if (!isPowerOfTwo(bits) || bits > 64n) return fail(`refcount width ${bits} is not allowed: it must be 1, 2, 4, 8, 16, 32 or 64 bits`);
  return ok(bits);
}

// ---- geometry [SPEC] ----

/** A standard L2 entry is 8 bytes; an extended one 16 (incompatible feature bit 4). */
export const l2EntryBytes = (extendedL2: boolean): bigint => (extendedL2 ? 16n : 8n);
export const entriesPerL2Table = (cluster: bigint, extendedL2: boolean): bigint => cluster / l2EntryBytes(extendedL2);
/** Guest bytes one L2 table maps: one cluster per entry. */
export const guestBytesPerL2Table = (cluster: bigint, extendedL2: boolean): bigint => cluster * entriesPerL2Table(cluster, extendedL2);
/** Guest bytes one cache entry (a whole table, or a slice of `entrySize` bytes) maps. */
export const guestBytesPerCacheEntry = (cluster: bigint, extendedL2: boolean, entrySize: bigint = cluster): bigint =>
  (entrySize / l2EntryBytes(extendedL2)) * cluster;
/** Data clusters that cover the virtual disk. */
export const dataClusters = (virtualSize: bigint, cluster: bigint): bigint => ceilDiv(virtualSize, cluster);
/** L2 tables of a fully allocated image; also the L1 table's entries. */
export const l2Tables = (virtualSize: bigint, cluster: bigint, extendedL2: boolean): bigint =>
  ceilDiv(virtualSize, guestBytesPerL2Table(cluster, extendedL2));
export const l1Entries = l2Tables;
export const subclusterSize = (cluster: bigint): bigint => cluster / SUBCLUSTERS_PER_CLUSTER;

/**
 * [CACHE] the L2 cache that maps the whole virtual disk: one entry per data cluster, rounded up to
 * whole cache entries because a table (or slice) is cached whole. 1280 MiB at 64 KiB -> 192 KiB.
 */
export function l2FullCoverage(virtualSize: bigint, cluster: bigint, extendedL2: boolean, entrySize: bigint = cluster): bigint {
  return roundUp(dataClusters(virtualSize, cluster) * l2EntryBytes(extendedL2), entrySize);
}

/** [CACHE] guest bytes an L2 cache of `cacheBytes` maps; only whole cache entries count. */
export function l2CoveredBytes(cacheBytes: bigint, cluster: bigint, extendedL2: boolean, entrySize: bigint = cluster): bigint {
  return (cacheBytes / entrySize) * guestBytesPerCacheEntry(cluster, extendedL2, entrySize);
}

/** [CACHE] host bytes a refcount cache of `cacheBytes` covers: cluster * 8 / refcount_bits clusters per block. */
export function refcountCoveredBytes(cacheBytes: bigint, cluster: bigint, refcountBits: bigint = DEFAULT_REFCOUNT_BITS): bigint {
  return (cacheBytes * cluster * 8n) / refcountBits;
}

/** Host clusters one refcount block (one cluster) counts. */
export const refcountEntriesPerBlock = (cluster: bigint, refcountBits: bigint = DEFAULT_REFCOUNT_BITS): bigint => (cluster * 8n) / refcountBits;

export const isAligned = (cacheBytes: bigint, entrySize: bigint): boolean => cacheBytes % entrySize === 0n;
export const minimumL2Cache = (entrySize: bigint): bigint => MIN_L2_CACHE_ENTRIES * entrySize;
export const minimumRefcountCache = (cluster: bigint): bigint => MIN_REFCOUNT_CACHE_CLUSTERS * cluster;

// ---- first-write amplification (common practice) ----

export interface WriteAmplification {
  /** The allocation unit a first write fills: the cluster, or a subcluster with extended L2. */
  unit: bigint;
  /** Bytes written for one request into unallocated space. */
  bytesMoved: bigint;
  /** bytesMoved / request, rounded to two decimals for display; the bigints above are exact. */
  ratio: number;
}

export function writeAmplification(requestSize: bigint, cluster: bigint, extendedL2: boolean): WriteAmplification {
  const unit = extendedL2 ? subclusterSize(cluster) : cluster;
  const request = requestSize > 0n ? requestSize : 1n;
  const bytesMoved = roundUp(request, unit);
  return { unit, bytesMoved, ratio: Number((bytesMoved * 100n) / request) / 100 };
}

/** The cache memory a machine may use: its share of the machine's RAM, rounded down to whole bytes (share kept to millionths). */
export function cacheBudgetOf(memory: bigint, shareOfMemory: number): bigint {
  return (memory * BigInt(Math.round(shareOfMemory * 1_000_000))) / 1_000_000n;
}

/** A machine's cache memory over all its disks, and its budget when its RAM is known. */
export interface MachineCacheUse {
  total: bigint;
  budget?: bigint;
}

/** The one place a machine's cache total and budget are computed: the budget rule and the report read it. */
export function machineCacheUse(diskTotals: readonly bigint[], memory: bigint | undefined, shareOfMemory: number): MachineCacheUse {
  const total = diskTotals.reduce((sum, t) => sum + t, 0n);
  return memory === undefined ? { total } : { total, budget: cacheBudgetOf(memory, shareOfMemory) };
}
