// Real trace files for the trace rules' tables: CSV written into a temporary folder beside the
// definition, then measured the way `cachewright lint` measures them (src/cli/lint-traces).
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { TraceCurves } from '../../src/cli/lint-traces';
import { prepareDocument, type LintOptions } from '../../src/lint';
import { traceRequestsOf } from '../../src/lint/traces';
import { traceRequestKey, type TraceFacts } from '../../src/model/traces';
import { measuredCurveOf } from '../../src/trace/facts';
import { measureTraces } from '../../src/trace/measure';
import { mappingFor, oneDisk, ruleTable, type ExpectedFinding, type MappingObject } from './harness';

export class TraceFolder {
  readonly dir = mkdtempSync(path.join(tmpdir(), 'cachewright-rule-traces-'));
  private readonly curves = new TraceCurves();
  private readonly sampled = new Map<string, TraceFacts>();

  /** `sampleRate` below 1: the traces are measured on a hashed sample, as the editor does for large ones. */
  constructor(private readonly sampleRate = 1) {}

  get definition(): string {
    return path.join(this.dir, 'fleet.yaml');
  }

  /** A CSV trace of `requests` 4 KiB reads cycling over `entries` offsets `span` bytes apart. */
  cycle(name: string, entries: number, span: bigint, requests: number): this {
    const lines = Array.from({ length: requests }, (_, i) => `${BigInt(i % entries) * span},4096`);
    return this.file(name, `${lines.join('\n')}\n`);
  }

  file(name: string, text: string): this {
    const target = path.join(this.dir, name);
    mkdirSync(path.dirname(target), { recursive: true });
    writeFileSync(target, text);
    return this;
  }

  /** Measures the traces every definition text names (with the mapping overrides of its case). */
  async load(cases: readonly { text: string; mapping?: MappingObject }[]): Promise<void> {
    for (const c of cases) {
      const prepared = prepareDocument({ path: this.definition, text: c.text }, mappingFor(c.mapping));
      if (this.sampleRate === 1) await this.curves.load(traceRequestsOf(prepared));
      for (const request of this.sampleRate === 1 ? [] : traceRequestsOf(prepared)) {
        const measured = await measureTraces(request.paths.map((p) => ({ path: p, display: p })), { geometry: request.geometry, sampleRate: this.sampleRate });
        if (measured.ok) this.sampled.set(traceRequestKey(request), { curve: measuredCurveOf(measured.value) });
      }
    }
  }

  readonly options = (): LintOptions => ({ traces: this.sampleRate === 1 ? this.curves.lookup : (request) => this.sampled.get(traceRequestKey(request)) });

  remove(): void {
    rmSync(this.dir, { recursive: true, force: true });
  }
}

/**
 * A one-case table for `rule`: the disk (one key per line, as oneDisk takes it) names a cyclic scan
 * over 64 entries 512 MiB apart, measured on a hashed sample of a quarter of them [SHARDS], as the
 * editor measures large traces; the finding must say the figures are estimated.
 */
export function sampledTraceTable(rule: string, name: string, disk: string, finding: ExpectedFinding): void {
  const folder = new TraceFolder(0.25).cycle('traces/cycle64.csv', 64, 512n * 1024n * 1024n, 20_000);
  const text = oneDisk(`${disk}\nio: { trace: traces/cycle64.csv }`);
  ruleTable(rule, {
    before: () => folder.load([{ text }]),
    after: () => folder.remove(),
    valid: [],
    invalid: [{ name, text, file: folder.definition, options: folder.options, findings: [finding] }],
  });
}
