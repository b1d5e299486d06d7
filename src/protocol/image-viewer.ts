// The one message protocol between the image viewer's host and its webview. Both sides import this
// module, so a message's shape cannot drift between them. Pure: no DOM, no vscode, no fs.
// Byte counts are bigint and travel as tagged strings (the panel's codec), so no size is ever
// rounded through a float on the way.
import { fromWire, messageDecoder, toWire } from './wire';
import type { DriverGeneration, HostPlatform } from '../core/profiles';
import type { ChainCost, LayerCost } from '../image/cost';
import type { HeaderNotes } from '../protocol/image-groups';
import type { ImageErrorKind } from '../image/errors';

/** Where the viewer is with one image. */
export type ViewState =
  /** Headers read, the table walk is running. */
  | 'reading'
  /** Every layer read and walked. */
  | 'done'
  /** The walk was stopped; header facts stay, walk counts are missing from the stopped layer on. */
  | 'cancelled'
  /** The image or a backing layer could not be read (the layer says why). */
  | 'failed'
  /** The workspace is not trusted: no image is read until it is. */
  | 'untrusted';

export interface WalkProgressView {
  /** 0 for the image opened, 1.. for backing layers, nearest first. */
  layer: number;
  path: string;
  l1Done: number;
  l1Total: number;
  l2TablesRead: number;
}

export interface LayerView {
  index: number;
  path: string;
  /** The backing name as the layer above writes it; null for the image opened. */
  name: string | null;
  format: string;
  /** qcow2 layers whose header could be read: layout, allocation (counts null until walked), caches. */
  cost: LayerCost | null;
  /** Header facts beside the numbers (dirty, corrupt, encryption, backing file...). */
  notes: HeaderNotes | null;
  /** Whether the metadata walk of this layer finished (the allocation counts are then complete). */
  walked: boolean;
  warnings: string[];
  error?: { kind: ImageErrorKind; message: string };
}

export interface ImageView {
  /** Grows by one with every view of one document; the webview echoes it when drawn. */
  seq: number;
  uri: string;
  path: string;
  fileName: string;
  state: ViewState;
  /** A sentence for the state line (why it stopped, what failed, what to do). */
  status: string;
  progress: WalkProgressView | null;
  /** The file changed (or went away) on disk after this read began: the numbers may be stale. */
  changedOnDisk: 'changed' | 'deleted' | null;
  /** The image first, then its backing files, nearest first. */
  layers: LayerView[];
  /** What a machine pays for the image and every backing layer, per choice. */
  chain: ChainCost | null;
  /** The driver-default profile the numbers assume, in a few words, and which one it is. */
  profile: string;
  profileChoice: ProfileChoice;
  cautions: string[];
}

/** Each error kind of the reader in plain words, for the state line and the chain. */
export const ERROR_KIND_WORDS: Record<ImageErrorKind, string> = {
  missing: 'missing file',
  unreadable: 'unreadable file',
  'not-qcow2': 'not a qcow2 image',
  malformed: 'malformed image',
  unsupported: 'unsupported feature',
  cycle: 'backing cycle',
  'too-deep': 'chain too deep',
  cancelled: 'stopped',
};

export interface ProfileChoice {
  generation: DriverGeneration;
  platform: HostPlatform;
}

/** What the webview drew, echoed so a test can check the picture matches the model. */
export interface DrawnSummary {
  state: ViewState;
  layers: number;
  /** Regions drawn in the allocation pictures, summed over layers. */
  mapRegions: number;
  /** Rows drawn in the caches groups of every layer plus the chain's sum. */
  cacheRows: number;
  progressShown: boolean;
  /** The "changed on disk" notice is shown. */
  changedNotice: boolean;
  /** The theme as the webview sees it: the editor's theme kind and colours computed from its variables. */
  theme: ThemeSummary;
}

export interface ThemeSummary {
  /** The body class the editor sets: vscode-light, vscode-dark, vscode-high-contrast, ... */
  kind: string;
  background: string;
  /** Computed fill of the stored-data columns and outline of the empty cells (none outside high contrast). */
  dataFill: string;
  cellStroke: string;
}

export type ViewerHostMessage =
  | { type: 'view'; view: ImageView }
  | { type: 'progress'; seq: number; progress: WalkProgressView };

export type ViewerWebviewMessage =
  | { type: 'ready' }
  | { type: 'rendered'; seq: number; drawn: DrawnSummary }
  | { type: 'stop' }
  | { type: 'reread' }
  | { type: 'profile'; choice: ProfileChoice };

export const decodeViewerHostMessage = messageDecoder<ViewerHostMessage>(['view', 'progress']);


export const encodeViewerMessage = (message: ViewerHostMessage | ViewerWebviewMessage): unknown => toWire(message);

/** The test hook's answer travels the same way (commands may serialise their results). */
export const encodeSnapshot = (snapshot: ViewerSnapshot): unknown => toWire(snapshot);
export const decodeSnapshot = (raw: unknown): ViewerSnapshot | undefined => {
  const value = fromWire(raw);
  return value !== null && typeof value === 'object' && 'view' in value ? (value as ViewerSnapshot) : undefined;
};

/** The last view a webview drew for one image, with what it drew. */
export interface ViewerSnapshot {
  view: ImageView;
  drawn: DrawnSummary;
  /** Views the host posted for this document, including superseded ones. */
  viewsPosted: number;
  /** Progress reports the host received from the walk. */
  progressReports: number;
}
