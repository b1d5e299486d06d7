// The one message protocol between the extension host and the sizing panel's webview. Both sides
// import this module, so a message's shape cannot drift between them. It is pure: no DOM, no vscode.
import type { SourceRange, Severity, SizingReport } from '../core/results';
import type { LayerSpec } from '../core/cache';
import type { DriverGeneration, HostPlatform } from '../core/profiles';
import { messageDecoder, toWire } from './wire';

export interface FindingView {
  rule: string;
  severity: Severity;
  message: string;
  pointer: string;
  range: SourceRange;
  accepted?: string;
  fixTitle?: string;
}

/** The values a definition writes for a disk's caches; absent means the driver's default. */
export interface ConfiguredCache {
  l2Cache?: bigint;
  refcountCache?: bigint;
  combinedCache?: bigint;
  cacheEntrySize?: bigint;
  cleanupInterval?: number;
}

export interface DiskView {
  /** Stable within one file: the disk's JSON Pointer. */
  pointer: string;
  name: string;
  machine: string;
  range: SourceRange;
  sizing: SizingReport;
  /** The cache entry size in use: the slice, or the whole L2 table (one cluster). */
  entrySize: bigint;
  extendedL2: boolean;
  configured: ConfiguredCache;
  recommended: { l2Cache: bigint; cleanupInterval: number };
  /** The layers as the engine sized them, top first: the what-if mode recomputes from these. */
  chain: LayerSpec[];
  /** The workload the definition declares (or the mapping assumes): the hit-ratio curve models it. */
  workload: { pattern: string; requestSize: bigint };
  /** With a trace the linter measured: its figures and curve, drawn beside the modelled one. */
  measured?: MeasuredView;
  findings: FindingView[];
}

/** A disk's measured trace, as the engine's report gives it (every number from the report). */
export interface MeasuredView {
  /** The trace files as the definition writes them. */
  traces: string[];
  requests: number;
  /** The guest bytes the traced requests fall in, from the lowest offset to the highest end. */
  span: { start: bigint; end: bigint };
  /** 1: every lookup counted; below 1, the share of cache entries sampled. */
  sampleRate: number;
  /** The hit ratio of the definition's effective L2 cache on the trace. */
  hitRatio: number;
  workingSet: bigint;
  /** The smallest cache reaching the target on the trace (the working set when none does). */
  recommendedL2Cache: bigint;
  targetHitRatio: number;
  targetReached: boolean;
  /** The hit ratio at quarter-octave cache sizes up to the working set, and at the marks. */
  points: { cacheBytes: bigint; hitRatio: number }[];
  /** The geometry it was measured with: a what-if trial with another one cannot use the curve. */
  clusterSize: bigint;
  entrySize: bigint;
}

export interface MachineView {
  pointer: string;
  name: string;
  range: SourceRange;
  memory?: bigint;
  /** The share of memory the caches may take, in bytes; absent when the machine's memory is unknown. */
  budget?: bigint;
  cacheMemoryTotal: bigint;
  disks: DiskView[];
  findings: FindingView[];
}

/** A machine placed on a host, in whichever definition of the workspace it sits. */
export interface HostMachineView {
  name: string;
  /** Its definition, relative to the mapping file's folder. */
  file: string;
  uri: string;
  range: SourceRange;
  /** Whether it sits in the file the panel shows. */
  here: boolean;
  memory?: bigint;
  cacheMemoryTotal: bigint;
}

/** A hypervisor host the file's machines sit on, summed over the whole workspace by the engine. */
export interface HostView {
  name: string;
  /** Absent when the mapping file gives no memory for the host. */
  memory?: bigint;
  cacheShare?: number;
  /** Named in the mapping's hosts list (else its memory is assume.hostMemory). */
  listed: boolean;
  /** The host's cache share in bytes. */
  allowed?: bigint;
  caches: bigint;
  guestMemory: bigint;
  /** Guest RAM plus caches. */
  needed: bigint;
  machines: HostMachineView[];
}

export interface PanelView {
  uri: string;
  fileName: string;
  version: number;
  profile: { generation: DriverGeneration; platform: HostPlatform };
  budgetShare?: number;
  machines: MachineView[];
  /** Findings not tied to a machine (syntax errors, mapping problems). */
  fileFindings: FindingView[];
  /** The hosts this file's machines sit on, with every machine of the workspace on them. */
  hosts: HostView[];
  cautions: string[];
}

/** What the user tries in the what-if mode; each absent value keeps the definition's own. */
export interface WhatIfValues {
  clusterSize?: bigint;
  l2Cache?: bigint;
  cacheEntrySize?: bigint;
}

export type HostMessage =
  | { type: 'show'; seq: number; view: PanelView }
  | { type: 'empty'; seq: number; reason: string }
  /** The editor's cursor is in this disk: the panel selects it (its card carries the curve). */
  | { type: 'focusDisk'; pointer: string }
  | { type: 'applied'; ok: boolean; message: string };

export type PanelMessage =
  | { type: 'ready' }
  | { type: 'rendered'; seq: number; disks: number }
  | { type: 'reveal'; uri: string; range: SourceRange }
  | { type: 'applyWhatIf'; uri: string; version: number; pointer: string; values: WhatIfValues };

/** Decodes a message from the host; undefined for anything that is not one. */
export const decodeHostMessage = messageDecoder<HostMessage>(['show', 'empty', 'focusDisk', 'applied']);
/** Decodes a message from the panel; undefined for anything that is not one. */
export const decodePanelMessage = messageDecoder<PanelMessage>(['ready', 'rendered', 'reveal', 'applyWhatIf']);

export const encodeMessage = (message: HostMessage | PanelMessage): unknown => toWire(message);
