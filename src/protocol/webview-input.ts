// What the host accepts from its webviews: every message a webview sends is input the host does not
// trust (a webview runs page code), so it is checked in full against a schema before it is acted on.
// Only the host imports this module; the webviews' bundles stay free of the schema library.
import { z } from 'zod';
import { DRIVER_GENERATIONS, HOST_PLATFORMS } from '../core/profiles';
import type { ViewerWebviewMessage, ViewState } from './image-viewer';
import type { PanelMessage } from './panel';
import { fromWire } from './wire';

/**
 * A decoder for messages a webview sends to the host: input the host does not trust, checked in
 * full against the schema (shape and types, byte counts back as bigint); undefined when it fails.
 */
function checkedDecoder<M>(schema: z.ZodType<M>): (raw: unknown) => M | undefined {
  return (raw) => {
    const parsed = schema.safeParse(fromWire(raw));
    return parsed.success ? parsed.data : undefined;
  };
}

const count = z.number().int().nonnegative();
const sourceRangeSchema = z.object({ offset: count, length: count, line: count, column: count, endLine: count, endColumn: count });
const whatIfSchema = z.object({ clusterSize: z.bigint().optional(), l2Cache: z.bigint().optional(), cacheEntrySize: z.bigint().optional() });
const panelMessageSchema = z.discriminatedUnion('type', [
  z.object({ type: z.literal('ready') }),
  z.object({ type: z.literal('rendered'), seq: count, disks: count }),
  z.object({ type: z.literal('reveal'), uri: z.string(), range: sourceRangeSchema }),
  z.object({ type: z.literal('applyWhatIf'), uri: z.string(), version: z.number().int(), pointer: z.string(), values: whatIfSchema }),
]);
export const decodePanelMessage = checkedDecoder<PanelMessage>(panelMessageSchema);

const VIEW_STATES: readonly ViewState[] = ['reading', 'done', 'cancelled', 'failed', 'untrusted'];
const drawnSchema = z.object({
  state: z.enum(VIEW_STATES),
  layers: count,
  mapRegions: count,
  cacheRows: count,
  progressShown: z.boolean(),
  changedNotice: z.boolean(),
  theme: z.object({ kind: z.string(), background: z.string(), dataFill: z.string(), cellStroke: z.string() }),
});
const viewerWebviewSchema = z.discriminatedUnion('type', [
  z.object({ type: z.literal('ready') }),
  z.object({ type: z.literal('rendered'), seq: count, drawn: drawnSchema }),
  z.object({ type: z.literal('stop') }),
  z.object({ type: z.literal('reread') }),
  z.object({ type: z.literal('profile'), choice: z.object({ generation: z.enum(DRIVER_GENERATIONS), platform: z.enum(HOST_PLATFORMS) }) }),
]);
export const decodeViewerWebviewMessage = checkedDecoder<ViewerWebviewMessage>(viewerWebviewSchema);
