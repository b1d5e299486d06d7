// Measures the L2 cache hit ratio of every cache size from one or more trace files of one disk, read
// in the order given as one sequence of requests: readers -> request mapper -> (sampling) -> exact
// LRU stack distances -> hit profile.

import { formatSize } from '../core/format';
import { fail, ok, type Outcome } from '../core/results';
import type { TraceFormat } from './formats/tally';
import { RequestMapper, type TraceGeometry } from './lookups';
import { HitProfile } from './profile';
import { readTraceFile, type TraceFileReport, type TraceFilter } from './reader';
import { SAMPLING_MODULUS, SampledLookups, samplingThreshold } from './sampling';
import { StackDistances } from './stack-distance';

export interface TraceFileName {
  /** Where to read it. */
  path: string;
  /** How messages and reports name it (as the user wrote it). */
  display: string;
}

export interface MeasureProgress {
  file: string;
  /** 0-based index of the file being read, of `files`. */
  index: number;
  files: number;
  bytesRead: number;
  totalBytes: number;
  requests: number;
}

export interface MeasureOptions {
  geometry: TraceGeometry;
  /** Share of cache entries to sample, in (0, 1]; 1 (the default) counts every lookup exactly. */
  sampleRate?: number;
  filter?: TraceFilter;
  onProgress?(progress: MeasureProgress): void;
}

export interface MeasuredTrace {
  files: TraceFileReport[];
  /** The format of every file, or 'mixed'. */
  format: TraceFormat | 'mixed';
  /** Requests looked up (inside the virtual disk). */
  requests: number;
  /** Requests running past the virtual size: counted, not looked up. */
  pastEnd: number;
  /** The guest bytes the looked-up requests fall in, from the lowest offset to the highest end. */
  span: { start: bigint; end: bigint };
  ignoredEvents: number;
  skippedLines: number;
  /** The first line not understood, over all files. */
  firstSkipped?: { path: string; line: number };
  geometry: TraceGeometry;
  /** The sampling rate asked for (1: exact); the profile scales by the rate the hash threshold gives. */
  sampleRate: number;
  profile: HitProfile;
}

export function checkSampleRate(rate: number): Outcome<number> {
  if (!Number.isFinite(rate) || rate <= 0 || rate > 1) return fail(`sample rate ${rate} is not allowed: it must be more than 0 and at most 1 (e.g. 0.01)`);
  if (rate < 1 / SAMPLING_MODULUS) return fail(`sample rate ${rate} is below the smallest rate, 1/${SAMPLING_MODULUS}`);
  return ok(rate);
}

export async function measureTraces(files: readonly TraceFileName[], options: MeasureOptions): Promise<Outcome<MeasuredTrace>> {
  if (files.length === 0) return fail('no trace file given');
  const rate = checkSampleRate(options.sampleRate ?? 1);
  if (!rate.ok) return rate;
  const distances = new StackDistances();
  const threshold = rate.value === 1 ? SAMPLING_MODULUS : samplingThreshold(rate.value);
  const sampler = rate.value === 1 ? undefined : new SampledLookups(distances, threshold);
  const mapper = new RequestMapper(options.geometry, sampler ?? distances);
  const reports: TraceFileReport[] = [];
  for (const [index, file] of files.entries()) {
    const before = { requests: mapper.requests, pastEnd: mapper.pastEnd };
    const onProgress = options.onProgress;
    const read = await readTraceFile(file.path, file.display, mapper, {
      ...(options.filter !== undefined ? { filter: options.filter } : {}),
      ...(onProgress !== undefined
        ? { onProgress: (bytesRead: number, totalBytes: number) => onProgress({ file: file.display, index, files: files.length, bytesRead, totalBytes, requests: mapper.requests }) }
        : {}),
    });
    if (!read.ok) return read;
    if (mapper.requests === before.requests) {
      const past = mapper.pastEnd - before.pastEnd;
      return fail(`${file.display}: no usable request: all ${past} request${past === 1 ? '' : 's'} run past the end of the ${formatSize(options.geometry.virtualSize)} disk (is it the trace of another disk?)`);
    }
    reports.push(read.value);
  }
  const formats = new Set(reports.map((r) => r.format));
  const firstSkippedFile = reports.find((r) => r.firstSkippedLine > 0);
  const effectiveRate = rate.value === 1 ? 1 : threshold / SAMPLING_MODULUS;
  return ok({
    files: reports,
    format: formats.size === 1 ? (reports[0]?.format ?? 'csv') : 'mixed',
    requests: mapper.requests,
    pastEnd: mapper.pastEnd,
    span: { start: BigInt(mapper.requests > 0 ? mapper.lowest : 0), end: BigInt(mapper.highestEnd) },
    ignoredEvents: reports.reduce((sum, r) => sum + r.ignoredEvents, 0),
    skippedLines: reports.reduce((sum, r) => sum + r.skippedLines, 0),
    ...(firstSkippedFile !== undefined ? { firstSkipped: { path: firstSkippedFile.path, line: firstSkippedFile.firstSkippedLine } } : {}),
    geometry: options.geometry,
    sampleRate: rate.value,
    profile: HitProfile.of(distances, sampler?.lookups ?? distances.lookups, effectiveRate),
  });
}
