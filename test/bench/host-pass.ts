// Benchmark (issue 13, the editor's host pass): after any definition is linted, the editor sums the
// caches of every machine on every host again over the latest report of every included file
// (src/extension/workspace-hosts.ts: runHostPass with the memo of the last pass). That pass runs on
// the editor's thread, 150 ms after the last keystroke; here it runs over 3,000 linted files with 4
// machines each on 40 hosts, first with nothing remembered (the first pass, or after a mapping
// change), then as after typing: one file linted again, the memo of the pass before. Prints the
// medians against 50 ms, the "long task" threshold of the W3C Long Tasks API (a task that long
// delays input visibly); asserts nothing (tests never assert on wall-clock time).
//   npx tsx test/bench/host-pass.ts [--files N] [--runs N]
import { performance } from 'node:perf_hooks';
import { HostPassMemo, lintDocument, loadMapping, runHostPass, type FileReport, type Finding, type Mapping } from '../../src/lint';
import { option } from './lib/options';
import { HOSTS, HOST_FLEET_MAPPING as MAPPING } from './lib/host-fleet';

const LONG_TASK_MS = 50;
const FILES = option('files', 3000);
const RUNS = option('runs', 15);

function definition(index: number): string {
  const machines = Array.from({ length: 4 }, (_, m) => {
    const k = index * 4 + m;
    return [
      `  - hostname: pier-${index}-${m}`,
      `    hv: hv-${k % HOSTS}`,
      `    ram: ${4 << (k % 4)}G`,
      `    volumes:`,
      `      - { label: root, capacity: ${20 << (k % 5)}G, block: 64K, tuning: { l2: ${1 << (k % 6)}M, sweep: 600 } }`,
      `      - { label: data, capacity: ${100 << (k % 4)}G, block: 64K }`,
    ].join('\n');
  });
  return `vms:\n${machines.join('\n')}\n`;
}

/** One pass as the editor runs it: empty finding lists for the step to fill, the reports as linted. */
function pass(files: readonly { path: string; report: FileReport }[], mapping: Mapping, memo?: HostPassMemo): number {
  const workspace = files.map(({ path, report }) => ({ path, machines: report.machines, findings: [] as Finding[] }));
  runHostPass(workspace, mapping, {}, memo);
  return workspace.reduce((n, f) => n + f.findings.length, 0);
}

function median(times: number[]): { median: number; fastest: number; slowest: number } {
  const sorted = [...times].sort((a, b) => a - b);
  return { median: sorted[Math.floor(sorted.length / 2)] ?? 0, fastest: sorted[0] ?? 0, slowest: sorted[sorted.length - 1] ?? 0 };
}

function line(label: string, times: number[]): void {
  const t = median(times);
  console.log(`  ${label}: median ${t.median.toFixed(1)} ms, fastest ${t.fastest.toFixed(1)} ms, slowest ${t.slowest.toFixed(1)} ms; ${(t.median / LONG_TASK_MS).toFixed(2)} of the ${LONG_TASK_MS} ms long-task threshold: ${t.median <= LONG_TASK_MS ? 'within it' : 'over it'}`);
}

function main(): void {
  const loaded = loadMapping(MAPPING, '/bench/cachewright.yaml');
  if (!loaded.mapping) throw new Error(loaded.problems.map((p) => p.message).join('; '));
  const mapping = loaded.mapping;
  const files = Array.from({ length: FILES }, (_, i) => {
    const path = `/bench/defs/d${i}.yaml`;
    return { path, report: lintDocument({ path, text: definition(i) }, mapping) };
  });
  const cold: number[] = [];
  let findings = 0;
  for (let run = 0; run < RUNS; run++) {
    const started = performance.now();
    findings = pass(files, mapping);
    cold.push(performance.now() - started);
  }
  const memo = new HostPassMemo();
  pass(files, mapping, memo);
  const typing: number[] = [];
  for (let run = 0; run < RUNS; run++) {
    // The file being edited is linted again (new report objects), as after a keystroke.
    const edited = (run * 97) % FILES;
    const path = `/bench/defs/d${edited}.yaml`;
    files[edited] = { path, report: lintDocument({ path, text: definition(edited) }, mapping) };
    const started = performance.now();
    pass(files, mapping, memo);
    typing.push(performance.now() - started);
  }
  const machines = files.reduce((n, f) => n + f.report.machines.length, 0);
  console.log(`host pass over ${FILES} files (${machines} machines on ${HOSTS} hosts, ${findings} host findings), ${RUNS} runs each`);
  line('nothing remembered (first pass, mapping changed)', cold);
  line('after one file is linted again (the editor, typing)', typing);
}

main();
