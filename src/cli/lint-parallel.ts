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
import { errorCode } from '../files/open';
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
  /** The first batches the thread lints; it asks for more as it finishes each. */
  batches: string[][];
}

type ShareMessage =
  /** One file finished (sent at once, so a thread that dies later loses nothing it finished). */
  | { type: 'file'; file: LintedFile; notes: string[] }
  /** A batch finished: the thread takes another if there is one. */
  | { type: 'batch-done' }
  | { type: 'done' }
  /** The thread could not start its share (the mapping file would not load there). */
  | { type: 'failed'; message: string };

/** What the command's thread tells a lint thread: another batch, or that there are no more. */
type BatchMessage = { type: 'batch'; files: string[] } | { type: 'no-more' };

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

/** Lints one thread's files in one process: the caches of image facts and trace curves live as long as it. */
class ShareLinter {
  private readonly images = new ImageFactsCache({ recheck: false });
  private readonly traces = new TraceCurves();
  readonly result: ShareResult = { files: [], notes: [] };

  constructor(private readonly mapping: Mapping, private readonly request: LintRequest, private readonly cwd: string, private readonly onFile: (file: LintedFile, notes: string[]) => void) {}

  async lint(files: readonly string[]): Promise<void> {
    const { notes } = this.result;
    for (const path of files) {
      const before = notes.length;
      const file = await lintFile(path, this.mapping, this.request, this.images, this.traces, notes, this.cwd);
      this.result.files.push(file);
      this.onFile(file, notes.slice(before));
    }
  }
}

async function lintShare(files: readonly string[], mapping: Mapping, request: LintRequest, cwd: string, onFile: () => void): Promise<ShareResult> {
  const linter = new ShareLinter(mapping, request, cwd, onFile);
  await linter.lint(files);
  return linter.result;
}

/**
 * Files cut into batches that the threads take as they go: a thread that starts late (loading the
 * bundle takes a few hundred milliseconds) or runs slowly on a busy machine simply takes fewer, so
 * no thread waits at the end for one that still holds a fixed share. The first batches go round the
 * threads in turn (the command's own thread first), so a small run splits by sorted path as before.
 */
class BatchQueue {
  private next = 0;
  readonly batches: string[][];

  constructor(files: readonly string[], threads: number) {
    // Small enough to even out the ends, large enough that asking costs nothing next to linting.
    const size = Math.max(1, Math.min(32, Math.floor(files.length / (threads * 8))));
    this.batches = [];
    for (let i = 0; i < files.length; i += size) this.batches.push(files.slice(i, i + size));
  }

  /** The first batches of thread `t` of `threads`: every threads-th batch, `depth` of them. */
  initial(t: number, threads: number, depth: number): string[][] {
    const out: string[][] = [];
    for (let k = 0; k < depth; k++) {
      const batch = this.batches[t + k * threads];
      if (batch) out.push(batch);
    }
    return out;
  }

  /** Marks the first `count` batches as handed out (after `initial` gave them to the threads). */
  skip(count: number): void {
    this.next = Math.min(this.batches.length, Math.max(this.next, count));
  }

  take(): string[] | undefined {
    return this.batches[this.next++];
  }

  /** Batches given back (by a thread that could not start): the command's thread lints them. */
  readonly returned: string[][] = [];
}

/** How a thread ended without finishing its share. */
type ShareEnd = { kind: 'finished' } | { kind: 'refused'; message: string } | { kind: 'died'; why: string };

function diedBecause(error: unknown): string {
  const code = errorCode(error);
  if (code === 'ERR_WORKER_OUT_OF_MEMORY') return 'ran out of memory';
  return `failed (${error instanceof Error ? error.message : String(error)})`;
}

function threadOptions(env: NodeJS.ProcessEnv): { resourceLimits?: { maxOldGenerationSizeMb: number } } {
  const heap = env[TEST_THREAD_HEAP_MB];
  return heap !== undefined && /^\d+$/.test(heap) ? { resourceLimits: { maxOldGenerationSizeMb: Number(heap) } } : {};
}

/**
 * Runs one thread: it starts with `first` and takes a batch from the queue each time it finishes
 * one. Never rejects: it resolves with the files the thread finished, those it held and had not
 * finished, and how it ended, whether it finished, refused its share or died (out of memory, or
 * any crash).
 */
function runShare(script: string, cwd: string, request: LintRequest, first: string[][], queue: BatchQueue, onFile: () => void): Promise<ShareResult & { held: string[]; end: ShareEnd }> {
  return new Promise((resolve) => {
    const files: LintedFile[] = [];
    const notes: string[] = [];
    const sent: string[][] = [...first];
    let settled = false;
    const settle = (end: ShareEnd): void => {
      if (settled) return;
      settled = true;
      const finished = new Set(files.map((f) => f.path));
      const held = sent.flat().filter((path) => !finished.has(path));
      resolve({ files, notes, held, end });
    };
    let worker: Worker;
    try {
      const job: ShareJob = { kind: WORKER_KIND, cwd, request, batches: first };
      worker = new Worker(`require(${JSON.stringify(script)})`, { eval: true, workerData: job, ...threadOptions(process.env) });
    } catch (error) {
      settle({ kind: 'refused', message: error instanceof Error ? error.message : String(error) });
      return;
    }
    worker.on('message', (message: ShareMessage) => {
      // After an 'error' the thread's last messages may still arrive (the runtime reports the crash
      // on another channel): the share is already settled and its unfinished files reported, so a
      // late result must not join it and a late request must not take a batch from the queue.
      if (settled) return;
      if (message.type === 'file') {
        files.push(message.file);
        notes.push(...message.notes);
        onFile();
      } else if (message.type === 'batch-done') {
        const batch = queue.take();
        if (batch) sent.push(batch);
        worker.postMessage((batch ? { type: 'batch', files: batch } : { type: 'no-more' }) satisfies BatchMessage);
      } else if (message.type === 'done') settle({ kind: 'finished' });
      else settle({ kind: 'refused', message: message.message });
    });
    worker.on('error', (error) => settle({ kind: 'died', why: diedBecause(error) }));
    worker.on('exit', (code) => settle({ kind: 'died', why: `stopped (exit ${code})` }));
  });
}

/** How many batches each thread is given ahead: it works on one while the next is on its way. */
const BATCHES_AHEAD = 2;

/** Lints `files` on as many threads as pay off; results come back in no particular order. */
export async function lintFiles(files: readonly string[], mapping: Mapping, request: LintRequest, cwd: string, progress: Progress): Promise<ShareResult> {
  const threads = threadCount(files.length);
  const script = workerScript();
  let done = 0;
  const tick = (): void => progress.tick(++done);
  if (threads <= 1 || !script) return lintShare(files, mapping, request, cwd, tick);

  const queue = new BatchQueue(files, threads);
  const own = queue.initial(0, threads, BATCHES_AHEAD);
  const others = Array.from({ length: threads - 1 }, (_, t) => queue.initial(t + 1, threads, BATCHES_AHEAD));
  queue.skip(threads * BATCHES_AHEAD);
  const linter = new ShareLinter(mapping, request, cwd, tick);
  const lost: LintedFile[] = [];
  const ended = others.map(async (first): Promise<ShareResult> => {
    const result = await runShare(script, cwd, request, first, queue, tick);
    if (result.end.kind === 'refused') {
      // The thread could not take its share (nothing was linted there): the command's thread takes it back.
      queue.returned.push(result.held);
    } else if (result.end.kind === 'died') {
      // It died while holding these files; one of them may be what killed it, so they are not tried
      // again here (that could take this thread down too): each is reported as not linted.
      const why = result.end.why;
      for (const path of result.held) {
        lost.push({ path, error: `not linted: the lint thread holding it ${why}`, fixed: 0 });
        tick();
      }
    }
    return { files: result.files, notes: result.notes };
  });
  let running = true;
  const all = Promise.all(ended).finally(() => (running = false));
  // The command's own thread: its first batches, then whatever the queue still holds; between
  // batches it lets the other threads' messages in (their results, their requests for more).
  for (const batch of own) {
    await linter.lint(batch);
    await new Promise((resolve) => setImmediate(resolve));
  }
  for (let batch = queue.take(); batch; batch = queue.take()) {
    await linter.lint(batch);
    await new Promise((resolve) => setImmediate(resolve));
  }
  // Batches a thread gave back can come in until the last thread has ended.
  for (;;) {
    const back = queue.returned.shift();
    if (back) {
      await linter.lint(back);
      continue;
    }
    if (!running) break;
    await Promise.race([all, new Promise((resolve) => setTimeout(resolve, 5))]);
  }
  const results = [linter.result, ...(await all), { files: lost, notes: [] }];
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
    const linter = new ShareLinter(mapping.value, job.request, job.cwd, (file, notes) => {
      if (exitAt !== undefined && nodePath.basename(file.path) === exitAt) process.exit(70);
      port.postMessage({ type: 'file', file, notes } satisfies ShareMessage);
    });
    const pending = [...job.batches];
    // Every batch-done the thread sends is answered once, with a batch or with no-more.
    let more = true;
    let unanswered = 0;
    let wake: (() => void) | undefined;
    const receive = (message: BatchMessage): void => {
      unanswered--;
      if (message.type === 'batch') pending.push(message.files);
      else more = false;
      wake?.();
    };
    port.on('message', receive);
    for (;;) {
      const batch = pending.shift();
      if (batch) {
        await linter.lint(batch);
        port.postMessage({ type: 'batch-done' } satisfies ShareMessage);
        unanswered++;
        // let an answer in if it is already there
        await new Promise((resolve) => setImmediate(resolve));
        continue;
      }
      if (!more || unanswered === 0) break;
      await new Promise<void>((resolve) => (wake = resolve));
      wake = undefined;
    }
    // without a listener the port no longer keeps the thread alive: it ends after the last message
    port.off('message', receive);
    port.postMessage({ type: 'done' } satisfies ShareMessage);
  } catch (error) {
    port.postMessage({ type: 'failed', message: error instanceof Error ? error.message : String(error) } satisfies ShareMessage);
  }
}

const isShareJob = (data: unknown): data is ShareJob => typeof data === 'object' && data !== null && 'kind' in data && data.kind === WORKER_KIND;

if (!isMainThread && isShareJob(workerData)) void serveShare(workerData);
