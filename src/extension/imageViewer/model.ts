// Turns the image reader's reports into the viewer's model. Every number comes from the engine:
// facts and counts from src/image, caches from src/core's layerCache/sizeChain. Pure (no vscode,
// no fs), so the same model can be checked outside the editor.
import { layerCache, sizeChain, type CacheSettings, type LayerCache, type LayerGeometry } from '../../core/cache';
import { CAUTIONS } from '../../core/cautions';
import { driverProfile, type DriverProfile } from '../../core/profiles';
import { refcountCoveredBytes, subclusterSize } from '../../core/sizing';
import type { ImageReport } from '../../image';
import {
  ERROR_KIND_WORDS,
  type CacheChoiceView, type ChainMemoryView, type ImageView, type LayerCachesView, type LayerView, type ViewState, type WalkProgressView,
} from '../../protocol/image-viewer';

export interface ViewInput {
  seq: number;
  uri: string;
  path: string;
  fileName: string;
  /** The image first, then its backing layers (nearest first). Empty before anything was read. */
  layers: readonly ImageReport[];
  state: ViewState;
  progress: WalkProgressView | null;
  profile?: DriverProfile;
  changedOnDisk?: 'changed' | 'deleted' | null;
  /** Replaces the state's usual sentence (e.g. why nothing could be read at all). */
  note?: string;
}

export function buildImageView(input: ViewInput): ImageView {
  const profile = input.profile ?? driverProfile();
  const layers = input.layers.map((report, index) => layerView(report, index, profile));
  return {
    seq: input.seq,
    uri: input.uri,
    path: input.path,
    fileName: input.fileName,
    state: input.state,
    status: input.note ?? statusLine(input.state, layers, input.progress),
    progress: input.progress,
    changedOnDisk: input.changedOnDisk ?? null,
    layers,
    memory: chainMemory(input.layers, profile),
    profile: profile.summary,
    profileChoice: { generation: profile.generation, platform: profile.platform },
    // The trace caution belongs to sized-from-a-trace views, not to an image's own facts.
    cautions: [CAUTIONS.reopen, CAUTIONS.hostMemory, CAUTIONS.fixedAtCreation, CAUTIONS.review],
  };
}

/** The state a finished (or stopped) inspection ends in. */
export function finalState(reports: readonly ImageReport[]): ViewState {
  if (reports.some((r) => r.errorKind === 'cancelled')) return 'cancelled';
  return reports.some((r) => r.error !== undefined) ? 'failed' : 'done';
}

function geometryOf(report: ImageReport): LayerGeometry | null {
  if (report.virtualSize === null || report.clusterSize === null || report.extendedL2 === null) return null;
  return {
    virtualSize: report.virtualSize,
    clusterSize: report.clusterSize,
    extendedL2: report.extendedL2,
    refcountBits: report.refcountBits === null ? undefined : BigInt(report.refcountBits),
  };
}

function choice(cache: LayerCache, refcountBits: number | null): CacheChoiceView {
  return {
    l2: cache.l2,
    l2Covered: cache.l2Covered,
    refcount: cache.refcount,
    refcountCovered: refcountCoveredBytes(cache.refcount, cache.geometry.clusterSize, BigInt(refcountBits ?? 16)),
  };
}

/** The settings behind each choice: an explicit L2 size, the refcount cache left to the driver. */
function settingsFor(report: ImageReport): { now?: CacheSettings; full: CacheSettings } {
  return {
    now: report.l2AllocatedCoverage === null ? undefined : { l2Cache: report.l2AllocatedCoverage },
    full: { l2Cache: report.l2FullCoverage ?? 0n },
  };
}

function layerCaches(report: ImageReport, profile: DriverProfile): LayerCachesView | null {
  const geometry = geometryOf(report);
  if (!geometry || report.format !== 'qcow2') return null;
  const settings = settingsFor(report);
  return {
    now: settings.now ? choice(layerCache(geometry, settings.now, profile), report.refcountBits) : undefined,
    full: choice(layerCache(geometry, settings.full, profile), report.refcountBits),
    driverDefault: choice(layerCache(geometry, {}, profile), report.refcountBits),
  };
}

function layerView(report: ImageReport, index: number, profile: DriverProfile): LayerView {
  const qcow2 = report.format === 'qcow2' && report.version !== null && report.clusterSize !== null && report.virtualSize !== null;
  const view: LayerView = {
    index,
    path: report.path,
    name: report.name,
    format: report.format,
    facts: qcow2 ? {
      version: report.version!,
      virtualSize: report.virtualSize!,
      clusterSize: report.clusterSize!,
      extendedL2: report.extendedL2 ?? false,
      subclusterSize: report.extendedL2 ? subclusterSize(report.clusterSize!) : null,
      refcountBits: report.refcountBits ?? 16,
      dirty: report.dirty ?? false,
      corrupt: report.corrupt ?? false,
      externalDataFile: report.externalDataFile,
      encryption: report.encryption ?? 'none',
      compressionType: report.compressionType ?? 'zlib',
      l1Entries: report.l1Entries ?? 0,
      backing: report.backing,
      backingFormat: report.backingFormat,
    } : null,
    walk: qcow2 && report.l2TablesAllocated !== null && report.allocation ? {
      l2TablesAllocated: report.l2TablesAllocated,
      dataClusters: report.dataClustersAllocated ?? 0,
      // The walk counts data clusters as standard + compressed.
      standardClusters: (report.dataClustersAllocated ?? 0) - (report.compressedClusters ?? 0),
      compressedClusters: report.compressedClusters ?? 0,
      zeroClusters: report.zeroClusters ?? 0,
      subclustersAllocated: report.subclustersAllocated,
      subclustersZero: report.subclustersZero,
      allocatedBytes: report.allocatedBytes ?? 0n,
      l2AllocatedCoverage: report.l2AllocatedCoverage ?? 0n,
      allocation: { regionBytes: report.allocation.regionBytes, data: [...report.allocation.data], zero: [...report.allocation.zero] },
      warnings: [...report.warnings],
    } : null,
    l2FullCoverage: report.l2FullCoverage,
    caches: layerCaches(report, profile),
  };
  if (report.error !== undefined) view.error = { kind: report.errorKind ?? 'unreadable', message: report.error };
  return view;
}

/** Every layer has caches of its own; the chain costs their sum ([CACHE]), per choice. */
function chainMemory(reports: readonly ImageReport[], profile: DriverProfile): ChainMemoryView | null {
  const sized = reports.filter((r) => r.format === 'qcow2' && geometryOf(r) !== null);
  if (sized.length === 0) return null;
  const specs = (pick: (r: ImageReport) => CacheSettings) => sized.map((r) => ({ geometry: geometryOf(r)!, settings: pick(r) }));
  const allWalked = sized.every((r) => r.l2AllocatedCoverage !== null);
  return {
    now: allWalked ? sizeChain(specs((r) => settingsFor(r).now!), profile).report.cacheMemoryTotal : null,
    full: sizeChain(specs((r) => settingsFor(r).full), profile).report.cacheMemoryTotal,
    driverDefault: sizeChain(specs(() => ({})), profile).report.cacheMemoryTotal,
    layersSized: sized.length,
    layersTotal: reports.length,
  };
}

function statusLine(state: ViewState, layers: readonly LayerView[], progress: WalkProgressView | null): string {
  switch (state) {
    case 'untrusted':
      return 'This workspace is not trusted, so cachewright reads no image files in it. Trust the workspace to see this image.';
    case 'reading':
      return progress && progress.layer > 0 ? `Reading the tables of backing layer ${progress.layer}…` : 'Reading the L1 and L2 tables…';
    case 'cancelled':
      return 'Stopped before the walk finished: the header facts are complete, the counts and the allocation map are missing from the layer that was being read on. Read again to finish.';
    case 'failed': {
      const bad = layers.find((l) => l.error !== undefined);
      if (!bad || !bad.error) return 'The image could not be read.';
      const where = bad.index === 0 ? 'The image' : `Backing layer ${bad.index}`;
      return `${where} could not be read (${ERROR_KIND_WORDS[bad.error.kind]}): ${bad.error.message}`;
    }
    case 'done':
      return layers.length > 1 ? `Read the image and ${layers.length - 1} backing layer${layers.length === 2 ? '' : 's'}.` : 'Read the image.';
  }
}
