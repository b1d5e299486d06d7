// The messages between the editor's thread and the worker thread that measures a disk's traces
// (src/extension/trace-worker.ts, bundled as dist/trace-worker.js). One job per worker: the request
// goes in as workerData, progress and the outcome come back as messages. Structured clone carries
// bigints and typed arrays, so the measured trace crosses as it is, its profile as plain data.
import type { Outcome } from '../core/results';
import { HitProfile, type HitProfileData } from '../trace/profile';
import type { MeasuredTrace } from '../trace/measure';
import type { TraceRequest } from '../model/traces';

export interface TraceJobInput {
  request: TraceRequest;
  /** 1: every lookup counted; below 1, the share of cache entries sampled. */
  sampleRate: number;
}

/** A measured trace without its methods: what crosses between the threads. */
export type MeasuredTraceData = Omit<MeasuredTrace, 'profile'> & { profile: HitProfileData };

export type TraceJobMessage =
  /** Share of the job's bytes read so far, 0..1. */
  | { type: 'progress'; done: number }
  | { type: 'measured'; outcome: Outcome<MeasuredTraceData> };

export function toData(measured: MeasuredTrace): MeasuredTraceData {
  return { ...measured, profile: measured.profile.data() };
}

export function fromData(data: MeasuredTraceData): MeasuredTrace {
  return { ...data, profile: new HitProfile(data.profile) };
}
