/**
 * qcow2 image reading for cachewright: read-only, over a small byte-source interface.
 *
 * Main entry points
 * - `inspectImage(path, { followChain?, walk?, signal?, onProgress?, buckets?, maxDepth?, blockingReads? }): Promise<ImageReport>`
 *   Header facts, the metadata walk (L2 tables, data/compressed/zero clusters, subclusters, an
 *   allocation map) and the backing chain (`report.chain`, nearest backing first). Never throws for a
 *   bad file: the failing layer carries `error` (a message naming the file) and `errorKind`.
 *   Cancelling through `signal` ends with `errorKind: 'cancelled'` on the layer being walked.
 *   `reportFailed(report)` is true when the image or any layer failed.
 * - `readChain(path, { maxDepth?, signal?, followChain?, blockingReads? }): Promise<ChainLayer[]>`
 *   Headers only (no table walk), the image first: path, name as written, format ('qcow2', 'raw', ...),
 *   header (qcow2 layers; cluster size, extended L2, refcount bits, backing name and format...),
 *   virtualSize, error. The chain stops at the first layer with an error; `chainProblem(layers)`
 *   returns it with its index.
 * - `layerReport(layer, summary?)`: the report of one ChainLayer (header facts only without a summary),
 *   e.g. to show headers at once while the walk is still running.
 * - `readHeader(source)` and `walkMetadata(source, header, options)` for a caller with its own
 *   `ByteSource` (`FileByteSource.open(path)` opens a file read-only; `MemoryByteSource` wraps bytes).
 *
 * Error kinds (`ImageErrorKind`): 'missing' | 'unreadable' | 'not-qcow2' | 'malformed' |
 * 'unsupported' | 'cycle' | 'too-deep' | 'cancelled'. For lint: 'cycle' -> backing-chain-cycle;
 * 'cancelled' -> nothing; every other kind -> image-unreadable.
 *
 * Reads are blocking positioned reads by default (at most one cluster each, with a turn for the
 * event loop every few milliseconds); `blockingReads: false` uses the thread pool instead.
 *
 * Byte counts are bigint; counts of tables and clusters are numbers. Nothing here writes a file.
 */
export { ImageError, toProblem, type ImageErrorKind, type ImageProblem } from './errors';
export { FileByteSource, MemoryByteSource, type ByteSource, type FileSourceOptions } from './source';
export { readHeader, QCOW2_MAGIC, INCOMPATIBLE, EXTENSION, type Qcow2Header, type FeatureName, type FeatureKind } from './header';
export { walkMetadata, type AllocationMap, type MetadataSummary, type WalkOptions, type WalkProgress } from './walk';
export { readChain, chainProblem, resolveBackingPath, DEFAULT_MAX_CHAIN_DEPTH, type ChainLayer, type ChainOptions } from './chain';
export { inspectImage, layerReport, reportFailed, type ImageReport, type InspectOptions, type InspectProgress } from './report';
