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
  /** Cancelled, or the thread stopped before it answered: measured again on the next workspace lint. */
  unfinished: boolean;
}

export class TraceCurveCache {
  private readonly entries = new Map<string, Entry>();
  /** Jobs queued or running, by key and stamps: a second lint of the same text waits for the first's job. */
  private readonly pending = new Map<string, Promise<void>>();
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
    /** The share of cache entries counted (1: every lookup). */
    readonly sampleRate = 1,
  ) {}

  private keyOf(request: TraceRequest): string {
    return `${traceRequestKey(request)}@${this.sampleRate}`;
  }

  /**
   * Measures the requests that are new or whose files changed. Resolves true when the facts of any of
   * them differ from those known when it was called: the caller lints with `lookup` and calls this
   * right after, in the same turn, so true means its report is out of date. Compared with the facts
   * at the call rather than with what this call measured, a job another lint started that ends while
   * this call reads the files' stamps still tells this caller to lint again.
   */
  async load(requests: readonly TraceRequest[]): Promise<boolean> {
    const unique = new Map(requests.map((r) => [this.keyOf(r), r]));
    const seen = new Map([...unique.keys()].map((key) => [key, this.entries.get(key)]));
    for (const [key, request] of unique) {
      const stamps = await this.stampsOf(request.paths);
      if (this.entries.get(key)?.stamps === stamps) continue;
      const pendingKey = `${key}#${stamps}`;
      let job = this.pending.get(pendingKey);
      if (!job) {
        job = this.enqueue(key, request, stamps).finally(() => this.pending.delete(pendingKey));
        this.pending.set(pendingKey, job);
      }
      await job;
    }
    return [...seen].some(([key, entry]) => this.entries.get(key) !== entry);
  }

  readonly lookup: TraceLookup = (request) => this.entries.get(this.keyOf(request))?.facts;

  /** Forgets the jobs that did not finish (cancelled, or their thread stopped), so the next lint measures them again. */
  forgetUnfinished(): void {
    for (const [key, entry] of [...this.entries]) if (entry.unfinished) this.entries.delete(key);
  }

  dispose(): void {
    this.disposed = true;
    for (const worker of this.workers) void worker.terminate();
    this.workers.clear();
  }

  private enqueue(key: string, request: TraceRequest, stamps: string): Promise<void> {
    const run = this.queue.then(async () => {
      if (this.disposed) return;
      const { facts, unfinished } = await this.measure(request);
      if (this.disposed) return;
      this.entries.set(key, { facts, stamps, unfinished });
    });
    this.queue = run.catch(() => undefined);
    return run;
  }

  /** Each trace file's size and modification time, to tell a changed file from a measured one. */
  protected async stampsOf(paths: readonly string[]): Promise<string> {
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

  private measure(request: TraceRequest): Promise<{ facts: TraceFacts; unfinished: boolean }> {
    const input: TraceJobInput = { request, sampleRate: this.sampleRate };
    const worker = new Worker(this.workerScript, { workerData: input });
    this.workers.add(worker);
    const listeners: Array<(done: number) => void> = [];
    let cancelled = false;
    const problem = (message: string): TraceFacts => ({ problem: { message, path: request.paths[0] ?? '' } });
    // A stopped thread may have met a passing shortage (memory, a busy machine): no automatic retry,
    // which could loop on a trace that always stops it, but the user's next workspace lint or an
    // edit of the file measures it again.
    const remeasureHint = 'it is measured again with "Lint every definition in the workspace" or when the file changes';
    const result = new Promise<{ facts: TraceFacts; unfinished: boolean }>((resolve) => {
      let settled = false;
      const settle = (facts: TraceFacts, unfinished = false): void => {
        if (settled) return;
        settled = true;
        this.workers.delete(worker);
        void worker.terminate();
        resolve({ facts, unfinished });
      };
      worker.on('message', (message: TraceJobMessage) => {
        if (message.type === 'progress') for (const listener of listeners) listener(message.done);
        else settle(message.outcome.ok ? { curve: measuredCurveOf(fromData(message.outcome.value)) } : problem(message.outcome.error));
      });
      worker.on('error', (error) => settle(problem(`measuring it failed: ${error.message}; ${remeasureHint}`), true));
      worker.on('exit', (code) => settle(problem(cancelled ? `measuring it was cancelled; ${remeasureHint}` : `the thread measuring it stopped (exit code ${code}) before it answered; ${remeasureHint}`), true));
    });
    this.onJob({
      paths: request.paths,
      onProgress: (listener) => listeners.push(listener),
      cancel: () => {
        cancelled = true;
        void worker.terminate();
      },
      finished: result.then(() => undefined),
    });
    return result;
  }
}
