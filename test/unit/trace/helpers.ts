// Shared by the trace tests: temporary folders, the curve command run in process, the flexible I/O
// tester from Debian (the `fio` package, installed by .ci/run), and independent ways to compute the
// lookups a list of requests makes, written from the issue's rule rather than taken from src/trace.
import { strict as assert } from 'node:assert';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { LRUCache } from 'lru-cache';
import { runCurve } from '../../../src/cli/curve';
import type { CommandIO } from '../../../src/cli/io';

export function tempFolder(prefix: string): { dir: string; remove(): void } {
  const dir = mkdtempSync(join(tmpdir(), `cachewright-${prefix}-`));
  return { dir, remove: () => rmSync(dir, { recursive: true, force: true }) };
}

export interface CurveRun {
  code: number;
  stdout: string;
  stderr: string;
}

export async function curve(cwd: string, ...args: string[]): Promise<CurveRun> {
  let stdout = '';
  let stderr = '';
  const io: CommandIO = { stdout: (t) => void (stdout += t), stderr: (t) => void (stderr += t), cwd, stderrIsTTY: false };
  const code = await runCurve(args, io);
  return { code, stdout, stderr };
}

/** Runs `curve --format json` and returns the parsed report (byte counts as numbers: small here). */
export async function curveJson(cwd: string, ...args: string[]): Promise<CurveJson> {
  const run = await curve(cwd, ...args, '--format', 'json');
  assert.equal(run.code, 0, run.stderr);
  return JSON.parse(run.stdout) as CurveJson;
}

export interface CurveJson {
  tool: string;
  trace: { files: string[]; format: string; requests: number; skippedLines: number; pastEnd: number; ignoredEvents: number; firstSkipped?: { file: string; line: number } };
  geometry: { virtualSize: number; clusterSize: number; l2EntryWidth: number; cacheEntryBytes: number };
  lookups: number;
  firstTouches: number;
  entriesTouched: number;
  workingSet: number;
  sampleRate: number;
  curve: { cacheBytes: number; entries: number; hitRatio: number }[];
  at: { cacheBytes: number; entries: number; hitRatio: number; misses: number }[];
  target: { hitRatio: number; cacheBytes: number; reached: boolean };
}

// ---- the flexible I/O tester ----

function ioTesterVersion(): string | undefined {
  try {
    return execFileSync('fio', ['--version'], { encoding: 'utf8' }).trim();
  } catch {
    return undefined;
  }
}

/** Skips (or under CI fails) when Debian's `fio` package is missing. */
export function requireIoTester(context: Mocha.Context): void {
  if (ioTesterVersion() !== undefined) return;
  const reason = 'the flexible I/O tester is not installed (apt-get install fio)';
  if (process.env.CI === 'true') throw new Error(reason);
  console.warn(`      skipped: ${reason}`);
  context.skip();
}

/**
 * Runs one job with the null I/O engine (no disk touched) and `write_iolog`, returning the log's path.
 * The job file holds `[name]` and the options given.
 */
export function writeIoLog(dir: string, name: string, options: Record<string, string | number>): string {
  const log = join(dir, `${name}.log`);
  const job = join(dir, `${name}.fio`);
  const lines = [`[${name}]`, 'ioengine=null', `filename=${join(dir, `${name}.data`)}`, ...Object.entries(options).map(([k, v]) => `${k}=${v}`), `write_iolog=${log}`];
  writeFileSync(job, `${lines.join('\n')}\n`);
  execFileSync('fio', [job, '--output=/dev/null'], { cwd: dir });
  return log;
}

export interface Request {
  offset: number;
  length: number;
  op: 'read' | 'write' | 'trim';
}

/** The reads, writes and trims of an I/O log, by splitting its lines as the tester's manual describes. */
export function ioLogRequests(text: string): Request[] {
  const requests: Request[] = [];
  const lines = text.split('\n');
  const version = lines[0]?.includes('version 3') ? 3 : 2;
  for (const line of lines.slice(1)) {
    const parts = line.trim().split(/\s+/);
    const fields = version === 3 ? parts.slice(1) : parts;
    const [, action, offset, length] = fields;
    if ((action === 'read' || action === 'write' || action === 'trim') && Number(length) > 0) {
      requests.push({ offset: Number(offset), length: Number(length), op: action });
    }
  }
  return requests;
}

/** Cache entry lookups of requests: each distinct entry a request touches, ascending (issue 12). */
export function lookupsOf(requests: readonly Request[], guestBytesPerEntry: number): number[] {
  const keys: number[] = [];
  for (const { offset, length } of requests) {
    for (let e = Math.floor(offset / guestBytesPerEntry); e <= Math.floor((offset + length - 1) / guestBytesPerEntry); e++) keys.push(e);
  }
  return keys;
}

/** Hits of a cache of `capacity` entries replaying `keys` through the library's LRU [lru-cache]. */
export function libraryHits(keys: ArrayLike<number>, capacity: number): number {
  const cache = new LRUCache<number, true>({ max: capacity });
  let hits = 0;
  for (let i = 0; i < keys.length; i++) {
    const key = keys[i] as number;
    if (cache.get(key) !== undefined) hits++;
    else cache.set(key, true);
  }
  return hits;
}

/** The requests as CSV lines `offset,length,op`, with a header. */
export function asCsv(requests: readonly Request[]): string {
  return `offset,length,op\n${requests.map((r) => `${r.offset},${r.length},${r.op}`).join('\n')}\n`;
}

/**
 * The requests as block-layer trace text in the dumper's default output (its manual page, DEFAULT
 * OUTPUT: "%D %2c %8s %5T.%9t %5p %2a %3d", then "SECTOR + BLOCKS [command]"), each request queued (Q),
 * then issued (D) and completed (C), as a real trace interleaves them; a flush and a plug event between
 * them, and the per-CPU summary the dumper prints at the end.
 */
export function asBlockTrace(requests: readonly Request[], device = '8,16'): string {
  const lines: string[] = [];
  let sequence = 1;
  const rwbs = { read: 'R', write: 'WS', trim: 'D' } as const;
  const header = (action: string, letters: string, time: number): string => {
    const [major = '8', minor = '0'] = device.split(',');
    const dev = `${major.padStart(3)},${minor.padEnd(3)}`;
    const seconds = Math.floor(time);
    const nanos = Math.round((time - seconds) * 1e9);
    return `${dev} ${'1'.padStart(2)} ${String(sequence++).padStart(8)} ${String(seconds).padStart(5)}.${String(nanos).padStart(9, '0')} ${'4242'.padStart(5)} ${action.padStart(2)} ${letters.padStart(3)}`;
  };
  requests.forEach((r, i) => {
    const time = i * 0.0001;
    const sector = r.offset / 512;
    const blocks = r.length / 512;
    lines.push(`${header('Q', rwbs[r.op], time)} ${sector} + ${blocks} [db-writer]`);
    lines.push(`${header('G', rwbs[r.op], time)} ${sector} + ${blocks} [db-writer]`);
    if (i % 50 === 0) lines.push(`${header('P', 'N', time)} [db-writer]`);
    lines.push(`${header('D', rwbs[r.op], time)} ${sector} + ${blocks} [db-writer]`);
    lines.push(`${header('C', rwbs[r.op], time)} ${sector} + ${blocks} [0]`);
    if (i % 100 === 0) lines.push(`${header('D', 'FWS', time)} 0 + 0 [kworker/1:1H]`);
  });
  lines.push(`CPU1 (${device}):`, ` Reads Queued:           1,        4KiB  Writes Queued:           0,        0KiB`, `Total (${device}):`, `Throughput (R/W): 0KiB/s / 0KiB/s`, `Events (${device}): ${sequence} entries`);
  return `${lines.join('\n')}\n`;
}
