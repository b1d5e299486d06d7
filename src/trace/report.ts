// The measured curve as the `curve` command reports it (docs/cli.md), built once here so every
// front end formats the same numbers: the hit ratio at powers of two of cache entries up to the
// working set, at each size asked for, and the smallest cache reaching a target hit ratio.

import { l2EntryBytes } from '../core/sizing';
import type { TraceFormat } from './formats/tally';
import type { MeasuredTrace } from './measure';

export interface CurvePointReport {
  cacheBytes: bigint;
  entries: number;
  hitRatio: number;
}

export interface CurveReport {
  tool: 'cachewright';
  trace: {
    files: string[];
    format: TraceFormat | 'mixed';
    requests: number;
    skippedLines: number;
    pastEnd: number;
    /** Lines understood that look nothing up (flushes, syncs, other events). */
    ignoredEvents: number;
    firstSkipped?: { file: string; line: number };
  };
  geometry: { virtualSize: bigint; clusterSize: bigint; l2EntryWidth: bigint; cacheEntryBytes: bigint };
  lookups: number;
  firstTouches: number;
  entriesTouched: number;
  workingSet: bigint;
  sampleRate: number;
  curve: CurvePointReport[];
  at: (CurvePointReport & { misses: number })[];
  /** `reached` is false when no cache reaches the target (first touches always miss); cacheBytes is then the working set. */
  target: { hitRatio: number; cacheBytes: bigint; reached: boolean };
}

export const DEFAULT_TARGET_HIT_RATIO = 0.99;

/** The smallest cache, in bytes, reaching `target` on the measured trace, and whether any does. */
export function measuredRecommendation(measured: MeasuredTrace, target: number): { cacheBytes: bigint; reached: boolean } {
  const entryBytes = measured.geometry.cacheEntryBytes;
  const entries = measured.profile.smallestEntriesFor(target);
  if (entries === undefined) return { cacheBytes: workingSetOf(measured), reached: false };
  return { cacheBytes: BigInt(entries) * entryBytes, reached: true };
}

/** Distinct cache entries touched times the entry size: the cache that holds everything the trace used. */
export function workingSetOf(measured: MeasuredTrace): bigint {
  return BigInt(measured.profile.entriesTouched) * measured.geometry.cacheEntryBytes;
}

/** Entries a cache of `cacheBytes` holds: whole entries only. */
export const entriesIn = (cacheBytes: bigint, entryBytes: bigint): number => Number(cacheBytes / entryBytes);

export function curveReport(measured: MeasuredTrace, options: { at?: readonly bigint[]; target?: number } = {}): CurveReport {
  const { profile, geometry } = measured;
  const entryBytes = geometry.cacheEntryBytes;
  const point = (entries: number): CurvePointReport => ({ cacheBytes: BigInt(entries) * entryBytes, entries, hitRatio: profile.hitRatio(entries) });
  const curve: CurvePointReport[] = [];
  // A sampled curve starts where it can tell sizes apart: 1/R entries.
  let first = 1;
  while (first < profile.resolution) first *= 2;
  for (let entries = first; entries < profile.entriesTouched; entries *= 2) curve.push(point(entries));
  curve.push(point(Math.max(1, profile.entriesTouched)));
  const at = (options.at ?? []).map((cacheBytes) => {
    const entries = entriesIn(cacheBytes, entryBytes);
    const hitRatio = profile.hitRatio(entries);
    return { cacheBytes, entries, hitRatio, misses: Math.round(profile.lookups * (1 - hitRatio)) };
  });
  const targetRatio = options.target ?? DEFAULT_TARGET_HIT_RATIO;
  const recommendation = measuredRecommendation(measured, targetRatio);
  return {
    tool: 'cachewright',
    trace: {
      files: measured.files.map((f) => f.path),
      format: measured.format,
      requests: measured.requests,
      skippedLines: measured.skippedLines,
      pastEnd: measured.pastEnd,
      ignoredEvents: measured.ignoredEvents,
      ...(measured.firstSkipped !== undefined ? { firstSkipped: { file: measured.firstSkipped.path, line: measured.firstSkipped.line } } : {}),
    },
    geometry: { virtualSize: geometry.virtualSize, clusterSize: geometry.clusterSize, l2EntryWidth: l2EntryBytes(geometry.extendedL2), cacheEntryBytes: entryBytes },
    lookups: profile.lookups,
    firstTouches: profile.firstTouches,
    entriesTouched: profile.entriesTouched,
    workingSet: workingSetOf(measured),
    sampleRate: measured.sampleRate,
    curve,
    at,
    target: { hitRatio: targetRatio, cacheBytes: recommendation.cacheBytes, reached: recommendation.reached },
  };
}
