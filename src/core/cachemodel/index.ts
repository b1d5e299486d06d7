/**
 * Cache behaviour model for the qcow2 L2 cache (pure: no fs, no editor, no DOM; runs in the webview).
 *
 * Given a disk (virtual size, cluster size, extended L2, cache entry size), a working set (a guest byte
 * range, default the whole disk) and an access pattern, predicts the steady-state LRU hit ratio of the
 * L2 cache and what the misses cost. Byte counts are bigint; counts of entries and ratios are numbers.
 * Nothing here throws on bad input: every entry point returns ModelResult, { ok: true, value } or
 * { ok: false, error: { field, message } } with a message naming the value and what is allowed.
 *
 * - modelCache(input: CacheModelInput): ModelResult<CacheModelReport>
 *     the model at input.cacheBytes: hitRatio, entries (N), cachedEntries (C), missesPer1000,
 *     metadataBytesPerIo, throughput (relative estimate and the device figures it assumed), ...
 * - prepareCacheModel(input: CacheModelGeometryInput): ModelResult<PreparedCacheModel>
 *     the per-disk work done once; then .at(cacheBytes), .hitRatioAt(entries), .curve(points = 64)
 *     for what-if edits and the panel.
 * - cacheModelCurve(input: CacheModelGeometryInput, points = 64): ModelResult<CacheCurve>
 *     hit ratio against cache size, log-spaced from 2 entries (the driver's floor) to full coverage.
 * - entrySizeCurves(input, { points?, sliceSize? }): ModelResult<EntrySizeCurves>
 *     the whole-table and the slice curve side by side.
 * - parseAccessSpec(text: string): ModelResult<AccessPattern>   `random|sequential|mixed|zipf(S)|P% on Q%`
 * - formatAccessSpec(access: AccessPattern): string              the inverse of parseAccessSpec
 * - DEVICE_CLASSES: the assumed latencies per device class (nvme, ssd, hdd; from memory, overridable
 *   through input.device).
 *
 * Methods (docs/cache-model.md): random access gives exactly C/N [IRM] when every touched entry is
 * fully covered; Zipf and "P% on Q%" access use the characteristic-time approximation of LRU [CHE]; a
 * sequential scan misses once per entry per pass unless all N entries fit.
 */

export {
  checkAccessPattern,
  formatAccessSpec,
  parseAccessSpec,
  MAX_ZIPF_EXPONENT,
  type AccessPattern,
  type ConcentratedAccess,
  type SequentialAccess,
  type RandomAccess,
  type ZipfAccess,
} from './access';
export { DEFAULT_DEVICE_CLASS, DEVICE_CLASSES, type DeviceClass, type DeviceLatency, type ThroughputEstimate } from './cost';
export { entryGeometry, entrySpan, type EntryGeometry, type EntrySpan, type WorkingSet } from './geometry';
export {
  cacheModelCurve,
  DEFAULT_CURVE_POINTS,
  DEFAULT_IO_SIZE,
  DEFAULT_SLICE_SIZE,
  DRIVER_MIN_ENTRIES,
  entrySizeCurves,
  modelCache,
  prepareCacheModel,
  type CacheCurve,
  type CacheModelGeometryInput,
  type CacheModelInput,
  type CacheModelReport,
  type CurvePoint,
  type EntrySizeCurves,
  type ModelMethod,
  type PreparedCacheModel,
} from './model';
export type { ModelProblem, ModelResult } from './result';
