// The cache behaviour model: maps a working set onto cache entries, predicts the steady-state LRU hit
// ratio for an access pattern, and turns it into misses, metadata bytes and a throughput estimate.
// prepareCacheModel does the per-disk work once (geometry, entry classes, Zipf nodes) so that a curve
// or a what-if drag only solves one small equation per cache size.

import { checkAccessPattern, type AccessPattern } from './access';
import { cheHitRatio, singleEntryHitRatio, weightedItems, type WarmStart, type WeightedItems } from './characteristic-time';
import { estimateThroughput, resolveDevice, type DeviceClass, type DeviceLatency, type ThroughputEstimate } from './cost';
import { checkWorkingSet, entryClasses, entryGeometry, entrySpan, type DensitySegment, type EntryGeometry, type WorkingSet } from './geometry';
import { failOn, ok, type ModelResult } from './result';
import { zipfItems } from './zipf';
import { atIndex } from '../indexed';

/** The driver keeps at least this many L2 cache entries whatever size is asked for [CACHE]. */
export const DRIVER_MIN_ENTRIES = 2;
/** Guest I/O size when none is given: a 4 KiB request is common practice. */
export const DEFAULT_IO_SIZE = 4096n;
export const DEFAULT_CURVE_POINTS = 64;
export const MAX_CURVE_POINTS = 4096;

/** Everything about a disk and its workload except the cache size. */
export interface CacheModelGeometryInput {
  virtualSize: bigint;
  clusterSize: bigint;
  extendedL2: boolean;
  /** Cache entry (slice) size; default: the cluster size, i.e. whole L2 tables. */
  entrySize?: bigint;
  /** Guest byte range the workload touches; default: the whole virtual disk. */
  workingSet?: WorkingSet;
  access: AccessPattern;
  /** Guest I/O size; default 4 KiB. */
  ioSize?: bigint;
  /** Device class for the throughput estimate, or explicit figures; default "ssd". */
  device?: DeviceClass | DeviceLatency;
  /** Smallest number of entries the cache holds; default 2, the driver's floor. */
  minEntries?: number;
}

export interface CacheModelInput extends CacheModelGeometryInput {
  /** L2 cache size in bytes; whole entries only (rounded down), never below minEntries entries. */
  cacheBytes: bigint;
}

export type ModelMethod = 'full-coverage' | 'exact-random' | 'exact-single-entry' | 'characteristic-time' | 'sequential-scan';

export interface CacheModelReport {
  access: AccessPattern;
  workingSet: WorkingSet;
  l2EntryBytes: bigint;
  /** Bytes of one cache entry (cluster size for whole tables, else the slice size). */
  entrySize: bigint;
  wholeTable: boolean;
  /** Guest bytes one cache entry maps. */
  guestBytesPerEntry: bigint;
  /** N: cache entries the working set touches (a partly covered entry counts whole). */
  entries: number;
  /** Entries the cache has room for: floor(cacheBytes / entrySize), at least minEntries. */
  capacityEntries: number;
  /** C: entries cached in steady state, min(capacityEntries, entries). */
  cachedEntries: number;
  /** capacityEntries * entrySize: the memory the cache really takes. */
  effectiveCacheBytes: bigint;
  /** entries * entrySize: the cache size at which the whole working set stays cached. */
  fullCoverageBytes: bigint;
  /** Steady-state share of metadata lookups that hit the cache, 0..1. */
  hitRatio: number;
  /** Cache lookups per guest I/O (1 unless an I/O spans entries). */
  lookupsPerIo: number;
  /** Cache misses, each one metadata read, per 1,000 guest I/Os. */
  missesPer1000: number;
  /** Metadata bytes read per guest I/O: misses per I/O times the entry size. */
  metadataBytesPerIo: number;
  throughput: ThroughputEstimate;
  /** How the hit ratio was obtained. */
  method: ModelMethod;
}

export interface CurvePoint {
  cacheBytes: bigint;
  capacityEntries: number;
  hitRatio: number;
  missesPer1000: number;
}

export interface CacheCurve {
  entrySize: bigint;
  wholeTable: boolean;
  entries: number;
  fullCoverageBytes: bigint;
  /** Log-spaced cache sizes from minEntries entries to full coverage, ascending and distinct: min(points, N - minEntries + 1) of them. */
  points: CurvePoint[];
}

export interface PreparedCacheModel {
  geometry: EntryGeometry;
  workingSet: WorkingSet;
  entries: number;
  fullCoverageBytes: bigint;
  minEntries: number;
  /** The model at one cache size in bytes. */
  at(cacheBytes: bigint): CacheModelReport;
  /** The hit ratio for a cache holding `capacityEntries` entries. */
  hitRatioAt(capacityEntries: number): number;
  /** Hit ratio against cache size, `points` log-spaced sizes from minEntries entries to full coverage. */
  curve(points?: number): CacheCurve;
}

interface Evaluation {
  hitRatio: number;
  missesPerIo: number;
  lookupsPerIo: number;
  method: ModelMethod;
}

/** `warm`, when given, carries the solver's last root along an ascending sweep of cache sizes. */
type Evaluator = (capacity: number, warm?: WarmStart) => Evaluation;

export function prepareCacheModel(input: CacheModelGeometryInput): ModelResult<PreparedCacheModel> {
  const geometryResult = entryGeometry(input.clusterSize, input.extendedL2, input.entrySize);
  if (!geometryResult.ok) return geometryResult;
  const geometry = geometryResult.value;
  const setResult = checkWorkingSet(input.virtualSize, input.workingSet);
  if (!setResult.ok) return setResult;
  const workingSet = setResult.value;
  const accessResult = checkAccessPattern(input.access);
  if (!accessResult.ok) return accessResult;
  const access = accessResult.value;
  const ioSize = input.ioSize ?? DEFAULT_IO_SIZE;
  if (ioSize <= 0n) return failOn('ioSize', `guest I/O size ${ioSize} bytes is not allowed: it must be greater than 0`);
  const minEntries = input.minEntries ?? DRIVER_MIN_ENTRIES;
  if (!Number.isSafeInteger(minEntries) || minEntries < 1) {
    return failOn('minEntries', `minimum cache entries ${String(minEntries)} is not allowed: use a whole number, 1 or more (the driver keeps at least ${DRIVER_MIN_ENTRIES})`);
  }
  const deviceResult = resolveDevice(input.device);
  if (!deviceResult.ok) return deviceResult;
  const device = deviceResult.value;

  const span = entrySpan(geometry, workingSet);
  const entries = Number(span.entries);
  const fullCoverageBytes = span.entries * geometry.entrySize;
  const evaluate = evaluator(access, geometry, workingSet, span.entries, ioSize);
  const capacityFor = (cacheBytes: bigint): number => {
    const whole = cacheBytes > 0n ? cacheBytes / geometry.entrySize : 0n;
    return Math.max(minEntries, Number(whole));
  };

  const at = (cacheBytes: bigint): CacheModelReport => {
    const capacityEntries = capacityFor(cacheBytes);
    const result = evaluate(capacityEntries);
    const cachedEntries = Math.min(capacityEntries, entries);
    return {
      access,
      workingSet,
      l2EntryBytes: geometry.l2EntryBytes,
      entrySize: geometry.entrySize,
      wholeTable: geometry.wholeTable,
      guestBytesPerEntry: geometry.guestBytesPerEntry,
      entries,
      capacityEntries,
      cachedEntries,
      effectiveCacheBytes: BigInt(capacityEntries) * geometry.entrySize,
      fullCoverageBytes,
      hitRatio: result.hitRatio,
      lookupsPerIo: result.lookupsPerIo,
      missesPer1000: result.missesPerIo * 1000,
      metadataBytesPerIo: result.missesPerIo * Number(geometry.entrySize),
      throughput: estimateThroughput(device, ioSize, geometry.entrySize, result.missesPerIo),
      method: result.method,
    };
  };

  const curve = (points = DEFAULT_CURVE_POINTS): CacheCurve => {
    const count = Math.min(MAX_CURVE_POINTS, Math.max(2, Math.floor(Number.isFinite(points) ? points : DEFAULT_CURVE_POINTS)));
    const low = minEntries;
    const high = Math.max(entries, minEntries);
    // Log-spaced, but each point at least one entry past the last and leaving room for the rest, so
    // the curve has exactly min(points, high - low + 1) distinct sizes ending at full coverage.
    const total = Math.min(count, high - low + 1);
    const capacities: number[] = [];
    const warm: WarmStart = { capacity: 0, time: 0 };
    for (let k = 0; k < total; k++) {
      const spaced = total === 1 ? high : Math.round(Math.exp(Math.log(low) + ((Math.log(high) - Math.log(low)) * k) / (total - 1)));
      const previous = capacities.length === 0 ? low - 1 : (atIndex(capacities, capacities.length - 1));
      capacities.push(Math.min(high - (total - 1 - k), Math.max(previous + 1, spaced)));
    }
    return {
      entrySize: geometry.entrySize,
      wholeTable: geometry.wholeTable,
      entries,
      fullCoverageBytes,
      points: capacities.map((capacity) => {
        const result = evaluate(capacity, warm);
        return {
          cacheBytes: BigInt(capacity) * geometry.entrySize,
          capacityEntries: capacity,
          hitRatio: result.hitRatio,
          missesPer1000: result.missesPerIo * 1000,
        };
      }),
    };
  };

  return ok({
    geometry,
    workingSet,
    entries,
    fullCoverageBytes,
    minEntries,
    at,
    hitRatioAt: (capacity: number) => evaluate(Math.max(0, Math.floor(capacity))).hitRatio,
    curve,
  });
}

function evaluator(access: AccessPattern, geometry: EntryGeometry, set: WorkingSet, entries: bigint, ioSize: bigint): Evaluator {
  const n = Number(entries);
  const g = geometry.guestBytesPerEntry;
  // A random I/O no larger than an entry's span is taken to fall inside one entry (aligned I/O);
  // a larger one looks up every entry it spans.
  const randomLookups = ioSize <= g ? 1 : Number(ioSize) / Number(g);
  const fromHit = (hitRatio: number, method: ModelMethod): Evaluation => ({
    hitRatio,
    missesPerIo: (1 - hitRatio) * randomLookups,
    lookupsPerIo: randomLookups,
    method,
  });
  const fullCoverage = (lookupsPerIo: number): Evaluation => ({ hitRatio: 1, missesPerIo: 0, lookupsPerIo, method: 'full-coverage' });

  switch (access.kind) {
    case 'sequential':
      return sequentialEvaluator(geometry, set, entries, ioSize);
    case 'random':
    case 'concentrated': {
      const segments = access.kind === 'random' ? [{ offset: set.offset, length: set.length, probability: 1 }] : concentratedSegments(set, access.share, access.fraction);
      const classes = entryClasses(geometry, segments);
      const items = weightedItems(classes);
      const equal = allEqual(items);
      return (capacity, warm) => {
        if (capacity >= items.total) return fullCoverage(randomLookups);
        if (equal) return fromHit(capacity / items.total, 'exact-random');
        if (capacity === 1) return fromHit(singleEntryHitRatio(items), 'exact-single-entry');
        return fromHit(cheHitRatio(items, capacity, warm), 'characteristic-time');
      };
    }
    case 'zipf': {
      if (access.exponent === 0) return (capacity) => (capacity >= n ? fullCoverage(randomLookups) : fromHit(capacity / n, 'exact-random'));
      const items = zipfItems(n, access.exponent);
      return (capacity, warm) => {
        if (capacity >= n) return fullCoverage(randomLookups);
        if (capacity === 1) return fromHit(singleEntryHitRatio(items), 'exact-single-entry');
        return fromHit(cheHitRatio(items, capacity, warm), 'characteristic-time');
      };
    }
  }
}

function allEqual(items: WeightedItems): boolean {
  let min = Number.POSITIVE_INFINITY;
  let max = 0;
  for (const q of items.probabilities) {
    min = Math.min(min, q);
    max = Math.max(max, q);
  }
  return max <= min * (1 + 1e-12);
}

/** The hot spot sits at the start of the working set: `fraction` of its bytes take `share` of accesses. */
export function concentratedSegments(set: WorkingSet, share: number, fraction: number): DensitySegment[] {
  const scale = 2 ** 30;
  let hot = (set.length * BigInt(Math.round(fraction * scale))) / BigInt(scale);
  if (hot < 1n) hot = 1n;
  if (hot >= set.length) hot = set.length - 1n;
  if (hot < 1n) return [{ offset: set.offset, length: set.length, probability: 1 }];
  return [
    { offset: set.offset, length: hot, probability: share },
    { offset: set.offset + hot, length: set.length - hot, probability: 1 - share },
  ];
}

/**
 * Repeated sequential passes, in ioSize steps from the working set's start. LRU holds nothing of use
 * for a cyclic scan longer than the cache, so each pass misses once per entry (the first lookup of
 * each entry) unless the cache holds all N entries. An I/O that crosses an entry boundary looks up
 * both entries; the crossings are counted exactly.
 */
function sequentialEvaluator(geometry: EntryGeometry, set: WorkingSet, entries: bigint, ioSize: bigint): Evaluator {
  const ios = (set.length + ioSize - 1n) / ioSize;
  const lookups = ios + boundaryCrossings(geometry.guestBytesPerEntry, set, entries, ioSize);
  const n = Number(entries);
  const lookupsPerIo = Number(lookups) / Number(ios);
  const missesPerIo = n / Number(ios);
  const hitRatio = 1 - n / Number(lookups);
  return (capacity) =>
    capacity >= n
      ? { hitRatio: 1, missesPerIo: 0, lookupsPerIo, method: 'full-coverage' }
      : { hitRatio, missesPerIo, lookupsPerIo, method: 'sequential-scan' };
}

/** Entry boundaries inside the working set that fall inside an I/O rather than between two I/Os. */
export function boundaryCrossings(g: bigint, set: WorkingSet, entries: bigint, ioSize: bigint): bigint {
  const inner = entries - 1n; // boundaries strictly inside the working set
  if (inner <= 0n) return 0n;
  // Boundary k (1..inner) sits at k*g - r past the working set's start, r = offset - firstEntry*g.
  // It lies between I/Os when k*g ≡ r (mod ioSize): a linear congruence.
  const r = set.offset % g;
  const divisor = gcd(g, ioSize);
  if (r % divisor !== 0n) return inner;
  const modulus = ioSize / divisor;
  if (modulus === 1n) return 0n;
  const k0 = ((r / divisor) % modulus) * modularInverse((g / divisor) % modulus, modulus) % modulus;
  const firstK = k0 === 0n ? modulus : k0;
  const between = firstK > inner ? 0n : (inner - firstK) / modulus + 1n;
  return inner - between;
}

function gcd(a: bigint, b: bigint): bigint {
  while (b !== 0n) [a, b] = [b, a % b];
  return a;
}

function modularInverse(a: bigint, modulus: bigint): bigint {
  let [oldR, r] = [a, modulus];
  let [oldS, s] = [1n, 0n];
  while (r !== 0n) {
    const quotient = oldR / r;
    [oldR, r] = [r, oldR - quotient * r];
    [oldS, s] = [s, oldS - quotient * s];
  }
  return ((oldS % modulus) + modulus) % modulus;
}

/** The model at one cache size (see CacheModelReport). */
export function modelCache(input: CacheModelInput): ModelResult<CacheModelReport> {
  const prepared = prepareCacheModel(input);
  if (!prepared.ok) return prepared;
  if (input.cacheBytes < 0n) return failOn('cacheBytes', `cache size ${input.cacheBytes} bytes is negative: use 0 or more bytes`);
  return ok(prepared.value.at(input.cacheBytes));
}

/** Hit ratio against cache size for the input's entry size. */
export function cacheModelCurve(input: CacheModelGeometryInput, points = DEFAULT_CURVE_POINTS): ModelResult<CacheCurve> {
  const prepared = prepareCacheModel(input);
  if (!prepared.ok) return prepared;
  return ok(prepared.value.curve(points));
}

export interface EntrySizeCurves {
  wholeTable: CacheCurve;
  /** Absent when no slice smaller than the cluster applies. */
  slice?: CacheCurve;
}

/** The usual slice size: the host filesystem block, 4 KiB [CACHE]. */
export const DEFAULT_SLICE_SIZE = 4096n;

/**
 * Whole-table and slice curves side by side for the same disk and workload. The slice size is
 * `sliceSize`, else the input's entry size when it is smaller than a cluster, else 4 KiB when the
 * cluster is larger than that; with none smaller than the cluster only the whole-table curve is given.
 */
export function entrySizeCurves(input: CacheModelGeometryInput, options: { points?: number; sliceSize?: bigint } = {}): ModelResult<EntrySizeCurves> {
  const points = options.points ?? DEFAULT_CURVE_POINTS;
  const whole = cacheModelCurve({ ...input, entrySize: input.clusterSize }, points);
  if (!whole.ok) return whole;
  const chosen = options.sliceSize ?? (input.entrySize !== undefined && input.entrySize < input.clusterSize ? input.entrySize : DEFAULT_SLICE_SIZE);
  if (chosen >= input.clusterSize && options.sliceSize === undefined) return ok({ wholeTable: whole.value });
  const slice = cacheModelCurve({ ...input, entrySize: chosen }, points);
  if (!slice.ok) return slice;
  return ok({ wholeTable: whole.value, slice: slice.value });
}
