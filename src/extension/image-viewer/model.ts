// Turns the image reader's reports into the viewer's model. Every number comes from the engine:
// the groups (layout, allocation, caches) and the chain's sum from src/image/cost, as inspect shows them. Pure (no vscode,
// no fs), so the same model can be checked outside the editor.
import { CAUTIONS } from '../../core/cautions';
import { driverProfile, type DriverProfile } from '../../core/profiles';
import type { ImageReport } from '../../image';
import { chainCost, layerCost } from '../../image/cost';
import type { HeaderNotes } from '../../protocol/image-groups';
import { ERROR_KIND_WORDS, type ImageView, type LayerView, type ViewState, type WalkProgressView } from '../../protocol/image-viewer';

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
    chain: chainCost(input.layers, profile),
    profile: profile.name,
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

function notesOf(report: ImageReport): HeaderNotes {
  return {
    dirty: report.dirty ?? false, corrupt: report.corrupt ?? false, encryption: report.encryption ?? 'none',
    compressionType: report.compressionType ?? 'zlib', externalDataFile: report.externalDataFile,
    backing: report.backing, backingFormat: report.backingFormat,
  };
}

function layerView(report: ImageReport, index: number, profile: DriverProfile): LayerView {
  const cost = layerCost(report, profile);
  const view: LayerView = {
    index,
    path: report.path,
    name: report.name,
    format: report.format,
    cost,
    notes: cost ? notesOf(report) : null,
    walked: report.l2TablesAllocated !== null && report.allocation !== null,
    warnings: [...report.warnings],
  };
  if (report.error !== undefined) view.error = { kind: report.errorKind ?? 'unreadable', message: report.error };
  return view;
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
