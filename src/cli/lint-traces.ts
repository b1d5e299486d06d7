// The I/O traces definitions name, measured for the linter (issue 12): each distinct request
// (traces + disk geometry) once per run, however many disks name it. Traces are only ever read.
import { traceRequestKey, type TraceFacts, type TraceLookup, type TraceRequest } from '../model/traces';
import { measuredCurveOf } from '../trace/facts';
import { measureTraces } from '../trace/measure';

export class TraceCurves {
  private readonly curves = new Map<string, TraceFacts>();

  /** Measures every request not measured yet. */
  async load(requests: readonly TraceRequest[]): Promise<void> {
    for (const request of requests) {
      const key = traceRequestKey(request);
      if (this.curves.has(key)) continue;
      const measured = await measureTraces(request.paths.map((path) => ({ path, display: path })), { geometry: request.geometry });
      this.curves.set(key, measured.ok ? { curve: measuredCurveOf(measured.value) } : { problem: { message: measured.error, path: request.paths[0] ?? '' } });
    }
  }

  readonly lookup: TraceLookup = (request) => this.curves.get(traceRequestKey(request));
}
