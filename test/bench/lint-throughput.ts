// Benchmark (issue 3, issue 11 section 8): `cachewright lint --format json` over 3,000 generated definition files with 4
// disks each, against the floor: a node process that only reads the same files and parses them with
// `yaml`. Prints both times and their ratio (target: at most 1.3x); asserts nothing (tests never
// assert on wall-clock time). Needs the built CLI (npm run build).
//   npx tsx test/bench/lint-throughput.ts [--files N] [--runs N] [--keep]   (--runs: rounds)
import { spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { CLI, option } from './lib/options';

const TARGET_RATIO = 1.3;

const FILES = option('files', 3000);
const RUNS = option('runs', 3);

const MAPPING = `version: 1
include: ["defs/**/*.yaml"]
machines: "$.vms[*]"
disks: "$.volumes[*]"
fields:
  machine: { name: "$.hostname", memory: "$.ram" }
  disk:
    name: "$.label"
    size: "$.capacity"
    clusterSize: "$.block"
    format: "$.kind"
    l2Cache: "$.tuning.l2"
    refcountCache: "$.tuning.refcount"
    cleanupInterval: "$.tuning.sweep"
    pattern: "$.io.pattern"
`;

// Sizes, caches and patterns cycle so the files hold a mix of clean disks and findings.
const SIZES = ['20G', '40G', '100G', '500G', '1T', '2T'];
const CACHES = ['2.5M', '5M', '8M', '16M', '3000K', undefined];
const CLUSTERS = ['64K', '64K', '128K', '1M'];
const PATTERNS = ['random', 'mixed', 'sequential'];

function definition(index: number): string {
  const volumes: string[] = [];
  for (let d = 0; d < 4; d++) {
    const k = index * 4 + d;
    const cache = CACHES[k % CACHES.length];
    volumes.push(
      [
        `      - label: vol${d}`,
        `        kind: qcow2`,
        `        capacity: ${SIZES[k % SIZES.length]}`,
        `        block: ${CLUSTERS[(k >> 1) % CLUSTERS.length]}`,
        ...(cache ? [`        tuning:`, `          l2: ${cache}`, `          sweep: ${k % 5 === 0 ? 0 : 600}`] : []),
        `        io: { pattern: ${PATTERNS[k % PATTERNS.length]} }`,
      ].join('\n'),
    );
  }
  return `# generated definition ${index}\nvms:\n  - hostname: bench-${index}\n    ram: ${4 << (index % 4)}G\n    volumes:\n${volumes.join('\n')}\n`;
}

function generate(): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cachewright-bench-'));
  fs.writeFileSync(path.join(dir, 'cachewright.yaml'), MAPPING);
  for (let i = 0; i < FILES; i++) {
    const sub = path.join(dir, 'defs', `group${Math.floor(i / 500)}`);
    if (i % 500 === 0) fs.mkdirSync(sub, { recursive: true });
    fs.writeFileSync(path.join(sub, `vm${i}.yaml`), definition(i));
  }
  return dir;
}

// The floor: list the same files, read each, parse it with the same library the engine uses.
const FLOOR = `
const fs = require('node:fs');
const path = require('node:path');
const YAML = require(process.env.BENCH_YAML);
const root = path.join(process.argv[2], 'defs');
let count = 0;
for (const group of fs.readdirSync(root)) {
  for (const name of fs.readdirSync(path.join(root, group))) {
    const doc = YAML.parseDocument(fs.readFileSync(path.join(root, group, name), 'utf8'));
    if (doc.toJS()) count++;
  }
}
process.stderr.write(String(count));
`;

interface Sample {
  wallMs: number;
  /** user + system CPU of the child, from the shell's `times`: steadier than wall time on a busy machine. */
  cpuMs: number;
}

const seconds = (text: string) => {
  const match = /^(\d+)m([\d.]+)s$/.exec(text);
  return match ? (Number(match[1]) * 60 + Number(match[2])) * 1000 : NaN;
};

function timeOnce(label: string, command: string[], cwd: string, env: NodeJS.ProcessEnv): Sample {
  const start = performance.now();
  // stdout of both goes to /dev/null: neither pays for a reader on the other end of a pipe
  const result = spawnSync('bash', ['-c', '"$0" "$@" > /dev/null; status=$?; times; exit $status', process.execPath, ...command], { cwd, env, encoding: 'utf8' });
  const wallMs = performance.now() - start;
  // lint exits 1 when the generated files hold errors; the floor reports how many files it parsed
  const failed = label === 'floor' ? result.status !== 0 || result.stderr !== String(FILES) : result.status !== 0 && result.status !== 1;
  if (failed) throw new Error(`${label} failed (${result.status}): ${result.stderr.slice(0, 2000)}`);
  const children = (result.stdout.trim().split('\n').at(-1) ?? '').split(/\s+/);
  return { wallMs, cpuMs: seconds(children[0] ?? '') + seconds(children[1] ?? '') };
}

/**
 * Two floors started together, each on all the files: how much longer each takes than one alone is
 * what a second core is worth on this machine (cores of a virtual machine can share a physical one).
 */
function timeTwoFloors(floorScript: string, dir: string, env: NodeJS.ProcessEnv): number {
  const start = performance.now();
  const result = spawnSync('bash', ['-c', '"$0" "$1" "$2" > /dev/null & "$0" "$1" "$2" > /dev/null & wait', process.execPath, floorScript, dir], { cwd: dir, env, encoding: 'utf8' });
  const wallMs = performance.now() - start;
  if (result.status !== 0 || result.stderr !== String(FILES).repeat(2)) throw new Error(`two floors failed (${result.status}): ${result.stderr.slice(0, 2000)}`);
  return wallMs;
}

const median = (values: number[]) => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)] ?? NaN;

function main(): void {
  if (!fs.existsSync(CLI)) {
    console.error(`${CLI} is missing: run "npm run build" first`);
    process.exitCode = 2;
    return;
  }
  const dir = generate();
  try {
    const env = { ...process.env, BENCH_YAML: require.resolve('yaml') };
    const floorScript = path.join(dir, 'floor.js');
    fs.writeFileSync(floorScript, FLOOR);
    const loadBefore = os.loadavg()[0] ?? NaN;
    const lintCommand = [CLI, 'lint', '--format', 'json'];
    // one warm-up of each so the file cache is hot for both
    timeOnce('floor', [floorScript, dir], dir, env);
    timeOnce('lint', lintCommand, dir, env);
    // Each round runs every side once, in turn: a machine that gets busier or quieter during the
    // benchmark then stretches all of them alike, and each round's own ratio cancels the drift.
    const floor: Sample[] = [];
    const lint: Sample[] = [];
    // the floor runs on one thread: the same on one thread shows the engine's own cost
    const single: Sample[] = [];
    const twoFloorRuns: number[] = [];
    for (let round = 0; round < RUNS; round++) {
      floor.push(timeOnce('floor', [floorScript, dir], dir, env));
      lint.push(timeOnce('lint', lintCommand, dir, env));
      single.push(timeOnce('lint', lintCommand, dir, { ...env, CACHEWRIGHT_JOBS: '1' }));
      twoFloorRuns.push(timeTwoFloors(floorScript, dir, env));
    }
    const twoFloors = median(twoFloorRuns);
    const wall = (s: Sample[]) => median(s.map((x) => x.wallMs));
    const cpu = (s: Sample[]) => median(s.map((x) => x.cpuMs));
    const roundRatio = (s: Sample[], pick: (x: Sample) => number) => median(s.map((x, i) => pick(x) / pick(floor[i] ?? x)));
    const ratio = roundRatio(lint, (x) => x.wallMs);
    console.log(`${FILES} files x 4 disks, median of ${RUNS} rounds         wall       cpu`);
    console.log(`  floor (read + yaml parse)     ${wall(floor).toFixed(0).padStart(8)} ms ${cpu(floor).toFixed(0).padStart(6)} ms`);
    console.log(`  cachewright lint --format json   ${wall(lint).toFixed(0).padStart(8)} ms ${cpu(lint).toFixed(0).padStart(6)} ms   (${os.availableParallelism()} cores)`);
    console.log(`  the same, CACHEWRIGHT_JOBS=1     ${wall(single).toFixed(0).padStart(8)} ms ${cpu(single).toFixed(0).padStart(6)} ms`);
    const range = (s: Sample[]) => `${Math.min(...s.map((x) => x.wallMs)).toFixed(0)}-${Math.max(...s.map((x) => x.wallMs)).toFixed(0)}`;
    console.log(`  wall spread over the runs: floor ${range(floor)} ms, lint ${range(lint)} ms, one thread ${range(single)} ms`);
    console.log(`  ratio ${ratio.toFixed(2)}x wall, the median of the rounds' own ratios (target <= ${TARGET_RATIO}x): ${ratio <= TARGET_RATIO ? 'within target' : 'over target'}`);
    console.log(`  one thread: ${roundRatio(single, (x) => x.wallMs).toFixed(2)}x wall, ${roundRatio(single, (x) => x.cpuMs).toFixed(2)}x cpu`);
    console.log(`  two floors at once: ${twoFloors.toFixed(0)} ms, ${(twoFloors / wall(floor)).toFixed(2)}x one alone (1.00x: two full cores; 2.00x: one core's worth)`);
    // Other work on the machine stretches wall times (and the threads' share of the cores): say how busy it was.
    console.log(`  load average (1 min) before ${loadBefore.toFixed(2)}, after ${(os.loadavg()[0] ?? NaN).toFixed(2)} on ${os.availableParallelism()} cores`);
  } finally {
    if (process.argv.includes('--keep')) console.log(`  files kept in ${dir}`);
    else fs.rmSync(dir, { recursive: true, force: true });
  }
}

main();
