// `cachewright curve`: the measured L2 cache hit ratio at every cache size, from the user's own I/O
// traces of one disk (docs/cli.md). The trace engine computes everything; this file reads the
// options, shows progress and formats the report.

import { isAbsolute, resolve } from 'node:path';
import { CAUTIONS } from '../core/cautions';
import { stringifyJson } from '../core/json';
import { fail, ok, type Outcome } from '../core/results';
import { guestBytesPerCacheEntry } from '../core/sizing';
import { parseShare, parseSize } from '../core/units';
import { formatShare, formatSize } from '../core/format';
import { FORMAT_NAMES } from '../trace/detect';
import { checkSampleRate, measureTraces, type MeasureProgress } from '../trace/measure';
import { curveReport, DEFAULT_TARGET_HIT_RATIO, type CurveReport } from '../trace/report';
import type { TraceGeometry } from '../trace/lookups';
import type { TraceFilter } from '../trace/reader';
import { diskGeometryOptions, formatOption, TEXT_OR_JSON, lastOption, readCommand, type OptionSpec, type ParsedArgs } from './args';
import { EXIT_OK, EXIT_USAGE, type CommandIO } from './io';
import { renderColumns } from './table';

const OPTIONS: Record<string, OptionSpec> = {
  size: { value: true },
  'cluster-size': { value: true },
  'extended-l2': { value: false },
  'cache-entry-size': { value: true },
  at: { value: true, repeatable: true },
  target: { value: true },
  sample: { value: true },
  device: { value: true },
  file: { value: true },
  format: { value: true },
  help: { value: false },
};

export const CURVE_USAGE = `usage: cachewright curve TRACE... --size SIZE [--cluster-size 64K] [--extended-l2]
                        [--cache-entry-size SIZE] [--at SIZE,...] [--target 99%]
                        [--sample RATE] [--device MAJ,MIN] [--file NAME] [--format text|json]

  TRACE               I/O traces of one disk, read in the order given as one sequence:
                      CSV "offset,length[,op]" in bytes, an I/O log (version 2 or 3), or
                      block-layer trace text (issued D events, else queued Q); .gz is read too
  --size              virtual size of the disk (e.g. 1T)
  --cluster-size      cluster size, a power of two from 512 B to 2 MiB (default 64K)
  --extended-l2       16-byte L2 entries (subclusters)
  --cache-entry-size  L2 cache entry size (default: whole L2 tables, one cluster)
  --at                also report these cache sizes (repeat or separate with commas)
  --target            hit ratio the recommended cache must reach (default 99%)
  --sample            count a share of cache entries only, e.g. 0.01, for very long traces;
                      the curve is then an estimate and says so
  --device            block-layer trace text covering several devices: the one to read (e.g. 8,16)
  --file              I/O log covering several files: the one to read, as the log names it
`;

interface CurveRequest {
  traces: string[];
  geometry: TraceGeometry;
  at: bigint[];
  target: number;
  sampleRate: number;
  filter: TraceFilter;
  format: 'text' | 'json';
}

function readRequest(args: ParsedArgs): Outcome<CurveRequest> {
  if (args.positionals.length === 0) return fail('name at least one TRACE file');
  const format = formatOption(args, TEXT_OR_JSON);
  if (!format.ok) return format;
  const geometry = diskGeometryOptions(args);
  if (!geometry.ok) return geometry;
  const { virtualSize, clusterSize, extendedL2, cacheEntrySize } = geometry.value;
  const at: bigint[] = [];
  for (const text of (args.options.get('at') ?? []).flatMap((v) => v.split(','))) {
    const parsed = parseSize(text);
    if (!parsed.ok) return fail(`--at: ${parsed.error}`);
    at.push(parsed.value);
  }
  const targetText = lastOption(args, 'target');
  const target = targetText === undefined ? ok(DEFAULT_TARGET_HIT_RATIO) : parseShare(targetText);
  if (!target.ok) return fail(`--target (hit ratio): ${target.error}`);
  const sampleText = lastOption(args, 'sample');
  let sampleRate = 1;
  if (sampleText !== undefined) {
    const share = parseShare(sampleText);
    const rate = share.ok ? checkSampleRate(share.value) : share;
    if (!rate.ok) return fail(`--sample (rate): ${rate.error}`);
    sampleRate = rate.value;
  }
  const device = lastOption(args, 'device');
  const file = lastOption(args, 'file');
  return ok({
    traces: args.positionals,
    geometry: { virtualSize, clusterSize, extendedL2, cacheEntryBytes: cacheEntrySize ?? clusterSize },
    at,
    target: target.value,
    sampleRate,
    filter: { ...(device !== undefined ? { device } : {}), ...(file !== undefined ? { file } : {}) },
    format: format.value,
  });
}

export async function runCurve(argv: readonly string[], io: CommandIO): Promise<number> {
  const request = readCommand(argv, OPTIONS, { name: 'curve', usage: CURVE_USAGE }, io, readRequest);
  if (!request.ok) return request.error;
  const r = request.value;
  const progress = io.stderrIsTTY ? progressLine(io) : undefined;
  const measured = await measureTraces(
    r.traces.map((display) => ({ display, path: isAbsolute(display) ? display : resolve(io.cwd, display) })),
    { geometry: r.geometry, sampleRate: r.sampleRate, filter: r.filter, ...(progress ? { onProgress: progress.draw } : {}) },
  );
  progress?.erase();
  if (!measured.ok) {
    io.stderr(`cachewright curve: ${measured.error}\n`);
    return EXIT_USAGE;
  }
  const report = curveReport(measured.value, { at: r.at, target: r.target });
  io.stdout(r.format === 'json' ? `${stringifyJson(report)}\n` : renderCurveText(report));
  return EXIT_OK;
}

const REDRAW_MS = 150;

function progressLine(io: CommandIO, now: () => number = Date.now): { draw(p: MeasureProgress): void; erase(): void } {
  let last = -Infinity;
  let drawn = false;
  return {
    draw(p) {
      const t = now();
      if (t - last < REDRAW_MS) return;
      last = t;
      drawn = true;
      const share = p.totalBytes === 0 ? 100 : Math.floor((p.bytesRead / p.totalBytes) * 100);
      const which = p.files > 1 ? ` (${p.index + 1}/${p.files})` : '';
      io.stderr(`\r\u001b[Kreading ${p.file}${which}: ${share}%, ${count(p.requests)} requests`);
    },
    erase() {
      if (drawn) io.stderr('\r\u001b[K');
    },
  };
}

const count = (n: number): string => n.toLocaleString('en-US');
const BAR_WIDTH = 30;
const bar = (ratio: number): string => '#'.repeat(Math.round(Math.max(0, Math.min(1, ratio)) * BAR_WIDTH)).padEnd(BAR_WIDTH, '.');

/** The text report: what was read, the curve with a bar per size, the sizes asked for, the recommendation. */
export function renderCurveText(report: CurveReport): string {
  const g = report.geometry;
  const sampled = report.sampleRate < 1;
  const estimate = sampled ? '~' : '';
  const entryKind = g.cacheEntryBytes === g.clusterSize ? 'a whole L2 table' : 'part of an L2 table';
  const maps = guestBytesPerCacheEntry(g.clusterSize, g.l2EntryWidth === 16n, g.cacheEntryBytes);
  const t = report.trace;
  const formatName = t.format === 'mixed' ? 'mixed formats' : FORMAT_NAMES[t.format];
  const lines: string[] = [
    `Measured L2 cache hit ratio from ${t.files.length === 1 ? t.files[0] : `${t.files.length} trace files`} (${formatName})`,
    `  disk        ${formatSize(g.virtualSize)} virtual, ${formatSize(g.clusterSize)} clusters, ${g.l2EntryWidth}-byte L2 entries`,
    `  cache entry size ${formatSize(g.cacheEntryBytes)} (${entryKind}), each maps ${formatSize(maps)} of the disk`,
    `  requests    ${count(t.requests)} looked up, ${count(report.lookups)} cache lookups`,
    `  first use   ${estimate}${count(report.firstTouches)} lookups touch an entry for the first time (always misses)`,
    `  working set ${estimate}${count(report.entriesTouched)} entries = ${formatSize(report.workingSet)} of L2 cache`,
  ];
  if (sampled) lines.push(`  SAMPLED     only ${report.sampleRate * 100}% of cache entries were counted: every figure marked ~ and the curve are estimates`);
  const notes: string[] = [];
  if (t.skippedLines > 0) {
    const first = t.firstSkipped ? ` (first: ${t.firstSkipped.file} line ${t.firstSkipped.line})` : '';
    notes.push(`${count(t.skippedLines)} line${t.skippedLines === 1 ? '' : 's'} not understood and skipped${first}`);
  }
  if (t.pastEnd > 0) notes.push(`${count(t.pastEnd)} request${t.pastEnd === 1 ? '' : 's'} ran past the ${formatSize(g.virtualSize)} disk and were left out: is --size right?`);
  lines.push('', 'cache size against hit ratio' + (sampled ? ' (estimated)' : ''));
  const rows = report.curve.map((p, i) => [
    formatSize(p.cacheBytes),
    `${count(p.entries)} entr${p.entries === 1 ? 'y' : 'ies'}`,
    formatShare(p.hitRatio),
    bar(p.hitRatio) + (i === report.curve.length - 1 ? '  working set' : ''),
  ]);
  lines.push(indent(renderColumns(rows)));
  if (report.at.length > 0) {
    lines.push('', 'sizes asked for');
    lines.push(indent(renderColumns(report.at.map((p) => [formatSize(p.cacheBytes), `${count(p.entries)} entries`, formatShare(p.hitRatio), `${estimate}${count(p.misses)} misses`]))));
  }
  lines.push('');
  const target = formatShare(report.target.hitRatio);
  if (report.target.reached) {
    lines.push(`Smallest L2 cache reaching ${target}: ${formatSize(report.target.cacheBytes)} (${count(Number(report.target.cacheBytes / g.cacheEntryBytes))} entries)`);
  } else {
    const best = report.curve.at(-1)?.hitRatio ?? 0;
    lines.push(`No cache reaches ${target} on this trace: first touches always miss, so the best is ${formatShare(best)} at the working set, ${formatSize(report.target.cacheBytes)}.`);
  }
  if (notes.length > 0) lines.push('', 'Notes', ...notes.map((n) => `  - ${n}`));
  lines.push('', 'Before changing a running system:', ...[CAUTIONS.tracePeriod, CAUTIONS.reopen, CAUTIONS.review].map((c) => `  - ${c}`), '');
  return lines.join('\n');
}

const indent = (text: string): string => text.split('\n').map((line) => `  ${line}`).join('\n');
