// Benchmark (issue 13, the editor's host pass): after any definition is linted, the editor sums the
// caches of every machine on every host again over the latest report of every included file
// (src/extension/workspace-hosts.ts: lintHosts, hostReports, and a JSON comparison with the last
// pass). That pass runs on the editor's thread, 150 ms after the last keystroke; here it runs over
// 3,000 linted files with 4 machines each on 40 hosts. Prints the median pass against 50 ms, the
// "long task" threshold of the W3C Long Tasks API (a task that long delays input visibly); asserts
// nothing (tests never assert on wall-clock time).
//   npx tsx test/bench/host-pass.ts [--files N] [--runs N]
import { performance } from 'node:perf_hooks';
import { hostReports, lintDocument, lintHosts, loadMapping, type FileReport, type Finding, type Mapping } from '../../src/lint';
import { option } from './lib/options';

const LONG_TASK_MS = 50;
const FILES = option('files', 3000);
const RUNS = option('runs', 15);
const HOSTS = 40;

const MAPPING = `version: 1
include: ["defs/**/*.yaml"]
machines: "$.vms[*]"
disks: "$.volumes[*]"
fields:
  machine: { name: "$.hostname", memory: "$.ram", host: "$.hv" }
  disk: { name: "$.label", size: "$.capacity", clusterSize: "$.block", l2Cache: "$.tuning.l2", cleanupInterval: "$.tuning.sweep" }
assume:
  hostMemory: 1T
hosts:
${Array.from({ length: HOSTS / 2 }, (_, h) => `  - { name: hv-${h}, memory: 512G }`).join('\n')}
`;

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

const jsonBigint = (_key: string, value: unknown): unknown => (typeof value === 'bigint' ? value.toString() : value);

/** One pass as the editor runs it: the host rule and the host reports over fresh finding lists, then the comparison. */
function pass(files: readonly { path: string; report: FileReport }[], mapping: Mapping, last: string): { reports: string; findings: number } {
  const workspace = files.map(({ path, report }) => ({ path, machines: report.machines, findings: [] as Finding[] }));
  lintHosts(workspace, mapping);
  const reports = JSON.stringify(hostReports(workspace, mapping), jsonBigint);
  let findings = 0;
  for (const file of workspace) {
    if (file.findings.length === 0) continue;
    findings += file.findings.length;
    JSON.stringify(file.findings, jsonBigint);
  }
  return { reports: reports === last ? last : reports, findings };
}

function main(): void {
  const loaded = loadMapping(MAPPING, '/bench/cachewright.yaml');
  if (!loaded.mapping) throw new Error(loaded.problems.map((p) => p.message).join('; '));
  const mapping = loaded.mapping;
  const files = Array.from({ length: FILES }, (_, i) => {
    const path = `/bench/defs/d${i}.yaml`;
    return { path, report: lintDocument({ path, text: definition(i) }, mapping) };
  });
  let last = '';
  let findings = 0;
  const times: number[] = [];
  for (let run = 0; run < RUNS; run++) {
    const started = performance.now();
    const result = pass(files, mapping, last);
    times.push(performance.now() - started);
    last = result.reports;
    findings = result.findings;
  }
  times.sort((a, b) => a - b);
  const median = times[Math.floor(times.length / 2)] ?? 0;
  const machines = files.reduce((n, f) => n + f.report.machines.length, 0);
  console.log(`host pass over ${FILES} files (${machines} machines on ${HOSTS} hosts, ${findings} host findings), ${RUNS} runs`);
  console.log(`  median ${median.toFixed(1)} ms, fastest ${(times[0] ?? 0).toFixed(1)} ms, slowest ${(times[times.length - 1] ?? 0).toFixed(1)} ms`);
  console.log(`  ${(median / LONG_TASK_MS).toFixed(2)} of the ${LONG_TASK_MS} ms long-task threshold: ${median <= LONG_TASK_MS ? 'within it' : 'over it'}`);
}

main();
