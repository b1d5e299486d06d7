// Large runs of `cachewright lint` spread over worker threads: each thread loads the mapping file
// itself, lints an interleaved share of the files (fixing them with --fix) and sends back what the
// outputs need. The command's own thread takes a share too. Small runs, a single core, or sources
// run without the built bundle stay on one thread. A thread that cannot take its share hands it back;
// one that dies (out of memory, a crash) reports every file it held and had not finished as not
// linted, an error: never a silent gap, never a pool waiting for it.
import { availableParallelism } from 'node:os';
import * as nodePath from 'node:path';
import { isMainThread, parentPort, Worker, workerData } from 'node:worker_threads';
import type { Mapping } from '../lint';
import { loadMappingText, resolveMapping } from './lint-discovery';
import { lintFile, type LintRequest } from './lint-file';
import { ImageFactsCache } from '../image/facts-cache';
import { TraceCurves } from './lint-traces';
import type { Progress } from './lint-progress';
import type { LintedFile } from './lint-results';

const WORKER_KIND = 'cachewright-lint-share';
/** Below this many files a thread's start-up (loading the bundle and the mapping) costs more than it saves. */
export const PARALLEL_MIN_FILES = 256;
const FILES_PER_THREAD = 128;
const MAX_THREADS = 8;

interface ShareJob {
  kind: typeof WORKER_KIND;
  cwd: string;
  request: LintRequest;
  files: string[];
}

type ShareMessage =
  /** One file finished (sent at once, so a thread that dies later loses nothing it finished). */
  | { type: 'file'; file: LintedFile; notes: string[] }
  | { type: 'done' }
  /** The thread could not start its share (the mapping file would not load there). */
  | { type: 'failed'; message: string };

/**
 * Reserved for tests: a heap limit for lint threads in MiB (a thread that exceeds it dies out of
 * memory, as one would on a huge file) and a file name at which a lint thread exits on its own.
 */
const TEST_THREAD_HEAP_MB = 'CACHEWRIGHT_TEST_THREAD_HEAP_MB';
const TEST_THREAD_EXIT_AT = 'CACHEWRIGHT_TEST_THREAD_EXIT_AT';

/** Threads for a run: CACHEWRIGHT_JOBS when set (1 = one thread), else by the file count and the cores. */
export function threadCount(files: number, env: NodeJS.ProcessEnv = process.env, cores: number = availableParallelism()): number {
  const asked = env.CACHEWRIGHT_JOBS;
  if (asked !== undefined && /^\d+$/.test(asked) && Number(asked) >= 1) return Math.max(1, Math.min(Number(asked), MAX_THREADS, files));
  if (files < PARALLEL_MIN_FILES) return 1;
  return Math.max(1, Math.min(cores, MAX_THREADS, Math.floor(files / FILES_PER_THREAD)));
}

/** The built CLI can run as a worker; TypeScript sources run by a test loader cannot. */
const workerScript = (): string | undefined => (__filename.endsWith('.js') ? __filename : undefined);

interface ShareResult {
  files: LintedFile[];
  notes: string[];
}

async function lintShare(files: readonly string[], mapping: Mapping, request: LintRequest, cwd: string, onFile: (file: LintedFile, notes: string[]) => void, yieldEvery = 0): Promise<ShareResult> {
  const images = new ImageFactsCache({ recheck: false });
  const traces = new TraceCurves();
  const notes: string[] = [];
  const out: LintedFile[] = [];
  for (const path of files) {
    const before = notes.length;
    const file = await lintFile(path, mapping, request, images, traces, notes, cwd);
    out.push(file);
    onFile(file, notes.slice(before));
    // let the other threads' progress messages in
    if (yieldEvery > 0 && out.length % yieldEvery === 0) await new Promise((resolve) => setImmediate(resolve));
  }
  return { files: out, notes };
}

/** How a thread ended without finishing its share. */
type ShareEnd = { kind: 'finished' } | { kind: 'refused'; message: string } | { kind: 'died'; why: string };

function diedBecause(error: unknown): string {
  const code = typeof error === 'object' && error !== null && 'code' in error ? String((error as { code: unknown }).code) : '';
  if (code === 'ERR_WORKER_OUT_OF_MEMORY') return 'ran out of memory';
  return `failed (${error instanceof Error ? error.message : String(error)})`;
}

function threadOptions(env: NodeJS.ProcessEnv): { resourceLimits?: { maxOldGenerationSizeMb: number } } {
  const heap = env[TEST_THREAD_HEAP_MB];
  return heap !== undefined && /^\d+$/.test(heap) ? { resourceLimits: { maxOldGenerationSizeMb: Number(heap) } } : {};
}

/**
 * Runs one share on a worker thread. Never rejects: it resolves with the files the thread finished
 * and how it ended, whether it finished, refused its share or died (out of memory, or any crash).
 */
function runShare(script: string, job: ShareJob, onFile: () => void): Promise<ShareResult & { end: ShareEnd }> {
  return new Promise((resolve) => {
    const files: LintedFile[] = [];
    const notes: string[] = [];
    let settled = false;
    const settle = (end: ShareEnd): void => {
      if (settled) return;
      settled = true;
      resolve({ files, notes, end });
    };
    let worker: Worker;
    try {
      worker = new Worker(`require(${JSON.stringify(script)})`, { eval: true, workerData: job, ...threadOptions(process.env) });
    } catch (error) {
      settle({ kind: 'refused', message: error instanceof Error ? error.message : String(error) });
      return;
    }
    worker.on('message', (message: ShareMessage) => {
      if (message.type === 'file') {
        files.push(message.file);
        notes.push(...message.notes);
        onFile();
      } else if (message.type === 'done') settle({ kind: 'finished' });
      else settle({ kind: 'refused', message: message.message });
    });
    worker.on('error', (error) => settle({ kind: 'died', why: diedBecause(error) }));
    worker.on('exit', (code) => settle({ kind: 'died', why: `stopped (exit ${code})` }));
  });
}

/** Lints `files` on as many threads as pay off; results come back in no particular order. */
export async function lintFiles(files: readonly string[], mapping: Mapping, request: LintRequest, cwd: string, progress: Progress): Promise<ShareResult> {
  const threads = threadCount(files.length);
  const script = workerScript();
  let done = 0;
  const tick = (): void => progress.tick(++done);
  if (threads <= 1 || !script) return lintShare(files, mapping, request, cwd, tick);

  const shares = Array.from({ length: threads }, (_, t) => files.filter((_, i) => i % threads === t));
  const others = shares.slice(1).map(async (share): Promise<ShareResult> => {
    const result = await runShare(script, { kind: WORKER_KIND, cwd, request, files: share }, tick);
    if (result.end.kind === 'finished') return result;
    const finished = new Set(result.files.map((f) => f.path));
    const rest = share.filter((path) => !finished.has(path));
    if (result.end.kind === 'refused') {
      // The thread could not take its share (nothing was linted there): lint the rest here.
      const here = await lintShare(rest, mapping, request, cwd, tick);
      return { files: [...result.files, ...here.files], notes: [...result.notes, ...here.notes] };
    }
    // It died while holding these files; one of them may be what killed it, so they are not tried
    // again here (that could take this thread down too): each is reported as not linted.
    const why = result.end.why;
    const lost: LintedFile[] = rest.map((path) => ({ path, error: `not linted: the lint thread holding it ${why}`, fixed: 0 }));
    for (let i = 0; i < lost.length; i++) tick();
    return { files: [...result.files, ...lost], notes: result.notes };
  });
  const own = await lintShare(shares[0] ?? [], mapping, request, cwd, tick, 32);
  const results = [own, ...(await Promise.all(others))];
  return { files: results.flatMap((r) => r.files), notes: results.flatMap((r) => r.notes) };
}

async function serveShare(job: ShareJob): Promise<void> {
  const port = parentPort;
  if (!port) return;
  try {
    const { mappingText, mappingPath } = job.request;
    const mapping = mappingText !== undefined && mappingPath !== undefined ? loadMappingText(mappingText, mappingPath) : resolveMapping(job.cwd, mappingPath, job.request.paths);
    if (!mapping.ok) {
      port.postMessage({ type: 'failed', message: mapping.error } satisfies ShareMessage);
      return;
    }
    const exitAt = process.env[TEST_THREAD_EXIT_AT];
    await lintShare(job.files, mapping.value, job.request, job.cwd, (file, notes) => {
      if (exitAt !== undefined && nodePath.basename(file.path) === exitAt) process.exit(70);
      port.postMessage({ type: 'file', file, notes } satisfies ShareMessage);
    });
    port.postMessage({ type: 'done' } satisfies ShareMessage);
  } catch (error) {
    port.postMessage({ type: 'failed', message: error instanceof Error ? error.message : String(error) } satisfies ShareMessage);
  }
}

const isShareJob = (data: unknown): data is ShareJob => typeof data === 'object' && data !== null && (data as { kind?: unknown }).kind === WORKER_KIND;

if (!isMainThread && isShareJob(workerData)) void serveShare(workerData);
