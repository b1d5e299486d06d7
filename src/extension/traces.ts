// The I/O traces definitions name, measured for the linter in a trusted workspace (issue 12): each
// request (traces + disk geometry) once, measured again only when one of its files changed (size or
// time). The readers stream the files and yield between chunks, so the extension host stays
// responsive. Read-only.
import { promises as fs } from 'node:fs';
import { traceRequestKey, type TraceFacts, type TraceLookup, type TraceRequest } from '../model/traces';
import { measuredCurveOf } from '../trace/facts';
import { measureTraces } from '../trace/measure';

async function stampOf(path: string): Promise<string> {
  try {
    const stat = await fs.stat(path);
    return `${stat.size}:${stat.mtimeMs}`;
  } catch {
    return 'missing';
  }
}

export class TraceCurvesCache {
  private readonly entries = new Map<string, { facts: TraceFacts; stamps: string[] }>();

  /** Measures the requests that are new or whose files changed; resolves true when any curve changed. */
  async load(requests: readonly TraceRequest[]): Promise<boolean> {
    let changed = false;
    for (const request of requests) {
      const key = traceRequestKey(request);
      const stamps = await Promise.all(request.paths.map(stampOf));
      const known = this.entries.get(key);
      if (known && known.stamps.every((s, i) => s === stamps[i])) continue;
      const measured = await measureTraces(request.paths.map((path) => ({ path, display: path })), { geometry: request.geometry });
      const facts: TraceFacts = measured.ok ? { curve: measuredCurveOf(measured.value) } : { problem: { message: measured.error, path: request.paths[0] ?? '' } };
      this.entries.set(key, { facts, stamps });
      changed = true;
    }
    return changed;
  }

  readonly lookup: TraceLookup = (request) => this.entries.get(traceRequestKey(request))?.facts;
}
