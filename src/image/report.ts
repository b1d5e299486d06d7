// One report per layer, the plain data `cachewright inspect`, the linter and the image viewer share.
import { l2FullCoverage } from '../core/sizing';
import { visitChain, type ChainLayer, type ChainOptions } from './chain';
import type { ImageErrorKind } from './errors';
import type { Qcow2Header } from './header';
import { walkMetadata, type AllocationMap, type MetadataSummary, type WalkProgress } from './walk';

export interface ImageReport {
  path: string;
  /** The backing name as the parent writes it; null for the image inspected. */
  name: string | null;
  format: string;
  version: 2 | 3 | null;
  virtualSize: bigint | null;
  clusterSize: bigint | null;
  extendedL2: boolean | null;
  refcountBits: number | null;
  l1Entries: number | null;
  l2TablesAllocated: number | null;
  dataClustersAllocated: number | null;
  /** [CACHE] the L2 cache mapping the whole virtual disk, whole-table entries. */
  l2FullCoverage: bigint | null;
  /** The L2 cache that holds every L2 table allocated now: tables * cluster size. */
  l2AllocatedCoverage: bigint | null;
  backing: string | null;
  backingFormat: string | null;
  dirty: boolean | null;
  corrupt: boolean | null;
  encryption: Qcow2Header['encryption'] | null;
  compressionType: Qcow2Header['compressionType'] | null;
  externalDataFile: string | null;
  compressedClusters: number | null;
  zeroClusters: number | null;
  subclustersAllocated: number | null;
  subclustersZero: number | null;
  /** Guest bytes stored in this layer. */
  allocatedBytes: bigint | null;
  allocation: AllocationMap | null;
  warnings: string[];
  /** Backing layers, nearest first (empty inside a chain entry and with followChain off). */
  chain: ImageReport[];
  error?: string;
  errorKind?: ImageErrorKind;
}

export interface InspectProgress extends WalkProgress {
  /** 0-based layer of the chain being walked, and its path. */
  layer: number;
  path: string;
}

export interface InspectOptions extends Pick<ChainOptions, 'maxDepth' | 'signal' | 'blockingReads'> {
  /** Follow backing files (default true). */
  followChain?: boolean;
  /** Walk the L1/L2 tables (default true); off gives the header facts only. */
  walk?: boolean;
  onProgress?: (progress: InspectProgress) => void;
  /** Regions of the allocation map (default 64). */
  buckets?: number;
}

/** Reads the image at `path` (and its backing chain), never throwing for a bad file. */
export async function inspectImage(path: string, options: InspectOptions = {}): Promise<ImageReport> {
  const summaries = new Map<number, MetadataSummary>();
  const walk = options.walk !== false;
  const layers = await visitChain(path, { maxDepth: options.maxDepth, signal: options.signal, followChain: options.followChain, blockingReads: options.blockingReads }, async (layer, source, index) => {
    if (!walk || !layer.header) return;
    const onProgress = options.onProgress;
    summaries.set(
      index,
      await walkMetadata(source, layer.header, {
        signal: options.signal,
        buckets: options.buckets,
        onProgress: onProgress ? (p) => onProgress({ ...p, layer: index, path: layer.path }) : undefined,
      }),
    );
  });
  const reports = layers.map((layer, index) => layerReport(layer, summaries.get(index)));
  const [top, ...rest] = reports;
  if (!top) throw new Error('unreachable: a chain has at least one layer');
  top.chain = rest;
  return top;
}

/** True when the image or any layer of its chain could not be read. */
export function reportFailed(report: ImageReport): boolean {
  return report.error !== undefined || report.chain.some((layer) => layer.error !== undefined);
}

export function layerReport(layer: ChainLayer, summary: MetadataSummary | undefined): ImageReport {
  const h = layer.header;
  const report: ImageReport = {
    path: layer.path,
    name: layer.name,
    format: layer.format,
    version: h?.version ?? null,
    virtualSize: layer.virtualSize,
    clusterSize: h?.clusterSize ?? null,
    extendedL2: h?.extendedL2 ?? null,
    refcountBits: h?.refcountBits ?? null,
    l1Entries: h?.l1Entries ?? null,
    l2TablesAllocated: summary?.l2TablesAllocated ?? null,
    dataClustersAllocated: summary?.dataClustersAllocated ?? null,
    l2FullCoverage: h ? l2FullCoverage(h.virtualSize, h.clusterSize, h.extendedL2) : null,
    l2AllocatedCoverage: h && summary ? BigInt(summary.l2TablesAllocated) * h.clusterSize : null,
    backing: h?.backingFile ?? null,
    backingFormat: h?.backingFormat ?? null,
    dirty: h?.dirty ?? null,
    corrupt: h?.corrupt ?? null,
    encryption: h?.encryption ?? null,
    compressionType: h?.compressionType ?? null,
    externalDataFile: h?.externalDataFile ?? null,
    compressedClusters: summary?.compressedClusters ?? null,
    zeroClusters: summary?.zeroClusters ?? null,
    subclustersAllocated: summary && h?.extendedL2 ? summary.subclustersAllocated : null,
    subclustersZero: summary && h?.extendedL2 ? summary.subclustersZero : null,
    allocatedBytes: summary?.allocatedBytes ?? null,
    allocation: summary?.allocation ?? null,
    warnings: summary?.warnings ?? [],
    chain: [],
  };
  if (layer.error) {
    report.error = layer.error.message;
    report.errorKind = layer.error.kind;
  }
  return report;
}
