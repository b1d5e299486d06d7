// The worker thread that measures one disk's traces (dist/trace-worker.js), so the editor's thread
// never waits for a long trace: it reads the files (only reads them), reports how far it got at most
// ten times a second and hands back the measured trace. Cancelling terminates the thread.
import { parentPort, workerData } from 'node:worker_threads';
import { measureTraces } from '../trace/measure';
import { toData, type TraceJobInput, type TraceJobMessage } from './trace-jobs';

const PROGRESS_EVERY_MS = 100;

async function run(port: NonNullable<typeof parentPort>, input: TraceJobInput): Promise<void> {
  const post = (message: TraceJobMessage): void => port.postMessage(message);
  let last = 0;
  const measured = await measureTraces(input.request.paths.map((path) => ({ path, display: path })), {
    geometry: input.request.geometry,
    sampleRate: input.sampleRate,
    onProgress: (p) => {
      const now = Date.now();
      if (now - last < PROGRESS_EVERY_MS) return;
      last = now;
      post({ type: 'progress', done: (p.index + (p.totalBytes > 0 ? p.bytesRead / p.totalBytes : 1)) / p.files });
    },
  });
  post({ type: 'measured', outcome: measured.ok ? { ok: true, value: toData(measured.value) } : measured });
}

if (parentPort) {
  const port = parentPort;
  const input: TraceJobInput = workerData;
  run(port, input).catch((error: unknown) => {
    port.postMessage({ type: 'measured', outcome: { ok: false, error: `measuring it failed: ${error instanceof Error ? error.message : String(error)}` } } satisfies TraceJobMessage);
  });
}
