// Cache entry geometry from the qcow2 format's own formulas, kept here (rather than borrowed from the
// sizing engine) so the model is self-contained: an L2 table is one cluster of L2 entries, and a cache
// entry is either that whole table or a slice of it.

import { isPowerOfTwo } from '../sizing';
import { failOn, ok, type ModelResult } from './result';

export const MIN_CLUSTER_SIZE = 512n; // cluster_bits 9
export const MAX_CLUSTER_SIZE = 2n * 1024n * 1024n; // cluster_bits 21
export const MIN_EXTENDED_L2_CLUSTER_SIZE = 16n * 1024n;
export const MIN_ENTRY_SIZE = 512n;
export const STANDARD_L2_ENTRY_BYTES = 8n;
export const EXTENDED_L2_ENTRY_BYTES = 16n;

export interface EntryGeometry {
  clusterSize: bigint;
  /** Bytes of one L2 entry: 8, or 16 with extended L2 entries. */
  l2EntryBytes: bigint;
  /** Bytes of one cache entry: the cluster size for whole tables, or the slice size. */
  entrySize: bigint;
  /** L2 entries held by one cache entry. */
  l2EntriesPerEntry: bigint;
  /** Guest bytes one cache entry maps: l2EntriesPerEntry * clusterSize. */
  guestBytesPerEntry: bigint;
  /** True when the cache entry is a whole L2 table. */
  wholeTable: boolean;
}

export function entryGeometry(clusterSize: bigint, extendedL2: boolean, entrySize?: bigint): ModelResult<EntryGeometry> {
  if (!isPowerOfTwo(clusterSize) || clusterSize < MIN_CLUSTER_SIZE || clusterSize > MAX_CLUSTER_SIZE) {
    return failOn('clusterSize', `cluster size ${clusterSize} bytes is not allowed: qcow2 clusters are a power of two from 512 bytes to 2 MiB`);
  }
  if (extendedL2 && clusterSize < MIN_EXTENDED_L2_CLUSTER_SIZE) {
    return failOn('extendedL2', `extended L2 entries need clusters of at least 16 KiB; the cluster size is ${clusterSize} bytes`);
  }
  const size = entrySize ?? clusterSize;
  if (!isPowerOfTwo(size) || size < MIN_ENTRY_SIZE || size > clusterSize) {
    return failOn('entrySize', `cache entry size ${size} bytes is not allowed: use a power of two from 512 bytes up to the cluster size (${clusterSize} bytes)`);
  }
  const l2EntryBytes = extendedL2 ? EXTENDED_L2_ENTRY_BYTES : STANDARD_L2_ENTRY_BYTES;
  const l2EntriesPerEntry = size / l2EntryBytes;
  return ok({
    clusterSize,
    l2EntryBytes,
    entrySize: size,
    l2EntriesPerEntry,
    guestBytesPerEntry: l2EntriesPerEntry * clusterSize,
    wholeTable: size === clusterSize,
  });
}

export interface WorkingSet {
  offset: bigint;
  length: bigint;
}

export interface EntrySpan {
  /** Index (from guest offset 0) of the first cache entry the working set touches. */
  firstEntry: bigint;
  /** Number of cache entries touched, partial first and last ones included. */
  entries: bigint;
  /** Guest bytes of the working set inside the first and the last touched entry. */
  firstCovered: bigint;
  lastCovered: bigint;
}

export function checkWorkingSet(virtualSize: bigint, workingSet: WorkingSet | undefined): ModelResult<WorkingSet> {
  if (virtualSize <= 0n) {
    return failOn('virtualSize', `virtual size ${virtualSize} bytes is not allowed: it must be greater than 0`);
  }
  const set = workingSet ?? { offset: 0n, length: virtualSize };
  if (set.offset < 0n) {
    return failOn('workingSet.offset', `working set offset ${set.offset} is negative: it must be from 0 to the virtual size (${virtualSize} bytes)`);
  }
  if (set.length <= 0n) {
    return failOn('workingSet.length', `working set length ${set.length} bytes is not allowed: it must be greater than 0`);
  }
  if (set.offset + set.length > virtualSize) {
    return failOn('workingSet', `working set ${set.offset}+${set.length} ends at byte ${set.offset + set.length}, past the end of the ${virtualSize}-byte disk: it must lie inside the virtual disk`);
  }
  return ok(set);
}

/** The cache entries a guest byte range touches, counting a partly covered entry as a whole one. */
export function entrySpan(geometry: EntryGeometry, set: WorkingSet): EntrySpan {
  const g = geometry.guestBytesPerEntry;
  const end = set.offset + set.length;
  const firstEntry = set.offset / g;
  const lastEntry = (end - 1n) / g;
  const entries = lastEntry - firstEntry + 1n;
  if (entries === 1n) return { firstEntry, entries, firstCovered: set.length, lastCovered: set.length };
  return {
    firstEntry,
    entries,
    firstCovered: (firstEntry + 1n) * g - set.offset,
    lastCovered: end - lastEntry * g,
  };
}

/** A guest byte range over which accesses are spread evenly; `probability` is the share of all accesses. */
export interface DensitySegment {
  offset: bigint;
  length: bigint;
  probability: number;
}

/**
 * Cache entries grouped by access probability: `count` entries each taking `probability` of the
 * accesses. Entries fully inside one segment share a class; an entry cut by a segment or working-set
 * boundary gets its own class, weighted by the bytes of each segment it covers.
 */
export interface EntryClass {
  count: number;
  probability: number;
}

export function entryClasses(geometry: EntryGeometry, segments: readonly DensitySegment[]): EntryClass[] {
  const g = geometry.guestBytesPerEntry;
  const partial = new Map<bigint, number>();
  const classes: EntryClass[] = [];
  const addPartial = (entry: bigint, probability: number): void => {
    partial.set(entry, (partial.get(entry) ?? 0) + probability);
  };
  for (const segment of segments) {
    if (segment.length <= 0n) continue;
    const start = segment.offset;
    const end = segment.offset + segment.length;
    const share = (bytes: bigint): number => (segment.probability * Number(bytes)) / Number(segment.length);
    const firstEntry = start / g;
    const lastEntry = (end - 1n) / g;
    if (firstEntry === lastEntry && (start % g !== 0n || end % g !== 0n)) {
      addPartial(firstEntry, segment.probability);
      continue;
    }
    const fullFrom = start % g === 0n ? firstEntry : firstEntry + 1n;
    const fullTo = end % g === 0n ? lastEntry + 1n : lastEntry; // exclusive
    if (start % g !== 0n) addPartial(firstEntry, share(fullFrom * g - start));
    if (end % g !== 0n) addPartial(lastEntry, share(end - lastEntry * g));
    const full = fullTo - fullFrom;
    if (full > 0n) classes.push({ count: Number(full), probability: share(g) });
  }
  for (const probability of partial.values()) classes.push({ count: 1, probability });
  return classes.filter((c) => c.count > 0 && c.probability > 0);
}
