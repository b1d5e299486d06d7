// The measured curves the open definitions' disks ask for, computed in a worker thread so typing
// never waits, and cached by the trace files (path, size, modification time) and the request's
// geometry, cache entry size and sampling rate: an edit that changes none of these reads nothing.
// One job at a time (the machine's cores are the user's); traces are only ever read.
import { promises as fs } from 'node:fs';
import { Worker } from 'node:worker_threads';
import { traceRequestKey, type TraceFacts, type TraceLookup, type TraceRequest } from '../model/traces';
import { measuredCurveOf } from '../trace/facts';
import { fromData, type TraceJobInput, type TraceJobMessage } from './trace-jobs';

/** A job the editor can show and cancel. */
export interface RunningTraceJob {
  /** The trace files, as absolute paths. */
  paths: readonly string[];
  /** Calls `listener` with the share read so far (0..1) as the worker reports it. */
  onProgress(listener: (done: number) => void): void;
  cancel(): void;
  /** Settles when the job ends, measured, failed or cancelled. */
  finished: Promise<void>;
}

interface Entry {
  facts: TraceFacts;
  /** Each trace file's size and modification time when it was read. */
  stamps: string;
  cancelled: boolean;
}

async function stampsOf(paths: readonly string[]): Promise<string> {
  const stamps = await Promise.all(paths.map(async (path) => {
    try {
      const stat = await fs.stat(path);
      return `${stat.size}:${stat.mtimeMs}`;
    } catch {
      return 'missing';
    }
  }));
  return stamps.join('|');
}

export class TraceCurveCache {
  private readonly entries = new Map<string, Entry>();
  /** Jobs queued or running, by key and stamps: a second lint of the same text waits for the first's job. */
  private readonly pending = new Map<string, Promise<boolean>>();
  private readonly workers = new Set<Worker>();
  private queue: Promise<unknown> = Promise.resolve();
  private disposed = false;

  /**
   * @param workerScript the bundled worker (dist/trace-worker.js)
   * @param onJob told of each job as it starts, to show its progress
   */
  constructor(
    private readonly workerScript: string,
    private readonly onJob: (job: RunningTraceJob) => void = () => undefined,
    private readonly sampleRate = 1,
  ) {}

  private keyOf(request: TraceRequest): string {
    return `${traceRequestKey(request)}@${this.sampleRate}`;
  }

  /** Measures the requests that are new or whose files changed; resolves true when any facts changed. */
  async load(requests: readonly TraceRequest[]): Promise<boolean> {
    const unique = new Map(requests.map((r) => [this.keyOf(r), r]));
    let changed = false;
    for (const [key, request] of unique) {
      const stamps = await stampsOf(request.paths);
      if (this.entries.get(key)?.stamps === stamps) continue;
      const pendingKey = `${key}#${stamps}`;
      let job = this.pending.get(pendingKey);
      if (!job) {
        job = this.enqueue(key, request, stamps).finally(() => this.pending.delete(pendingKey));
        this.pending.set(pendingKey, job);
      }
      if (await job) changed = true;
    }
    return changed;
  }

  readonly lookup: TraceLookup = (request) => this.entries.get(this.keyOf(request))?.facts;

  /** Forgets the jobs the user cancelled, so the next lint measures them again. */
  forgetCancelled(): void {
    for (const [key, entry] of [...this.entries]) if (entry.cancelled) this.entries.delete(key);
  }

  dispose(): void {
    this.disposed = true;
    for (const worker of this.workers) void worker.terminate();
    this.workers.clear();
  }

  private enqueue(key: string, request: TraceRequest, stamps: string): Promise<boolean> {
    const run = this.queue.then(async () => {
      if (this.disposed) return false;
      const { facts, cancelled } = await this.measure(request);
      if (this.disposed) return false;
      this.entries.set(key, { facts, stamps, cancelled });
      return true;
    });
    this.queue = run.catch(() => undefined);
    return run;
  }

  private measure(request: TraceRequest): Promise<{ facts: TraceFacts; cancelled: boolean }> {
    const input: TraceJobInput = { request, sampleRate: this.sampleRate };
    const worker = new Worker(this.workerScript, { workerData: input });
    this.workers.add(worker);
    const listeners: Array<(done: number) => void> = [];
    const problem = (message: string): TraceFacts => ({ problem: { message, path: request.paths[0] ?? '' } });
    const result = new Promise<{ facts: TraceFacts; cancelled: boolean }>((resolve) => {
      let settled = false;
      const settle = (facts: TraceFacts, cancelled = false): void => {
        if (settled) return;
        settled = true;
        this.workers.delete(worker);
        void worker.terminate();
        resolve({ facts, cancelled });
      };
      worker.on('message', (message: TraceJobMessage) => {
        if (message.type === 'progress') for (const listener of listeners) listener(message.done);
        else settle(message.outcome.ok ? { curve: measuredCurveOf(fromData(message.outcome.value)) } : problem(message.outcome.error));
      });
      worker.on('error', (error) => settle(problem(`measuring it failed: ${error.message}`)));
      worker.on('exit', () => settle(problem('measuring it was cancelled; it is measured again with "Lint every definition in the workspace" or when the file changes'), true));
    });
    this.onJob({
      paths: request.paths,
      onProgress: (listener) => listeners.push(listener),
      cancel: () => void worker.terminate(),
      finished: result.then(() => undefined),
    });
    return result;
  }
}
