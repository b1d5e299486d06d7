// Large runs of `cachewright lint` spread over worker threads: each thread loads the mapping file
// itself, lints an interleaved share of the files (fixing them with --fix) and sends back what the
// outputs need. The command's own thread takes a share too. Small runs, a single core, or sources
// run without the built bundle stay on one thread; a thread that fails hands its share back.
import { availableParallelism } from 'node:os';
import { isMainThread, parentPort, Worker, workerData } from 'node:worker_threads';
import type { Mapping } from '../lint';
import { loadMappingText, resolveMapping } from './lint-discovery';
import { lintFile, type LintRequest } from './lint-file';
import { ImageFacts } from './lint-images';
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
  | { type: 'progress'; done: number }
  | { type: 'done'; files: LintedFile[]; notes: string[] }
  | { type: 'failed'; message: string };

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

async function lintShare(files: readonly string[], mapping: Mapping, request: LintRequest, cwd: string, onFile: () => void, yieldEvery = 0): Promise<ShareResult> {
  const images = new ImageFacts();
  const traces = new TraceCurves();
  const notes: string[] = [];
  const out: LintedFile[] = [];
  for (const path of files) {
    out.push(await lintFile(path, mapping, request, images, traces, notes, cwd));
    onFile();
    // let the other threads' progress messages in
    if (yieldEvery > 0 && out.length % yieldEvery === 0) await new Promise((resolve) => setImmediate(resolve));
  }
  return { files: out, notes };
}

function runShare(script: string, job: ShareJob, onProgress: (done: number) => void): Promise<ShareResult> {
  return new Promise((resolve, reject) => {
    const worker = new Worker(`require(${JSON.stringify(script)})`, { eval: true, workerData: job });
    let settled = false;
    worker.on('message', (message: ShareMessage) => {
      if (message.type === 'progress') onProgress(message.done);
      else if (message.type === 'done') {
        settled = true;
        resolve({ files: message.files, notes: message.notes });
      } else {
        settled = true;
        reject(new Error(message.message));
      }
    });
    worker.on('error', (error) => {
      if (!settled) reject(error);
      settled = true;
    });
    worker.on('exit', (code) => {
      if (!settled) reject(new Error(`a lint thread stopped (exit ${code})`));
      settled = true;
    });
  });
}

/** Lints `files` on as many threads as pay off; results come back in no particular order. */
export async function lintFiles(files: readonly string[], mapping: Mapping, request: LintRequest, cwd: string, progress: Progress): Promise<ShareResult> {
  const threads = threadCount(files.length);
  const script = workerScript();
  let ownDone = 0;
  if (threads <= 1 || !script) return lintShare(files, mapping, request, cwd, () => progress.tick(++ownDone));

  const shares = Array.from({ length: threads }, (_, t) => files.filter((_, i) => i % threads === t));
  const workerDone = new Array<number>(threads).fill(0);
  const tick = () => progress.tick(ownDone + workerDone.reduce((a, b) => a + b, 0));
  const others = shares.slice(1).map((share, index) =>
    runShare(script, { kind: WORKER_KIND, cwd, request, files: share }, (done) => {
      workerDone[index + 1] = done;
      tick();
    }).catch(() => {
      // The thread could not finish: lint its share here, from the start (a --fix write is atomic
      // and a second pass over a fixed file finds nothing more to fix).
      workerDone[index + 1] = 0;
      return lintShare(share, mapping, request, cwd, () => {
        ownDone++;
        tick();
      });
    }),
  );
  const own = await lintShare(shares[0] ?? [], mapping, request, cwd, () => {
    ownDone++;
    tick();
  }, 32);
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
    let done = 0;
    const result = await lintShare(job.files, mapping.value, job.request, job.cwd, () => {
      done++;
      if (done % 25 === 0) port.postMessage({ type: 'progress', done } satisfies ShareMessage);
    });
    port.postMessage({ type: 'done', ...result } satisfies ShareMessage);
  } catch (error) {
    port.postMessage({ type: 'failed', message: error instanceof Error ? error.message : String(error) } satisfies ShareMessage);
  }
}

const isShareJob = (data: unknown): data is ShareJob => typeof data === 'object' && data !== null && (data as { kind?: unknown }).kind === WORKER_KIND;

if (!isMainThread && isShareJob(workerData)) void serveShare(workerData);
