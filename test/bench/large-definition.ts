// Benchmark (issue 14): one generated 10 MiB definition file (many small machines), linted by the
// built CLI (`cachewright lint --format json --no-images`) against the floor: a node process that
// reads the same file and parses it with `yaml` (parseDocument, the document model the linter needs
// for positions and comment-keeping fixes). Each side runs in its own process; prints the time and
// peak resident memory of each and their ratios (targets: time at most 1.5x, memory at most 1.3x).
// Asserts nothing (tests never assert on wall-clock time). Needs the built CLI (npm run build).
//   npx tsx test/bench/large-definition.ts [--mib N] [--runs N]
import { spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { CLI, option } from './lib/options';

const TIME_TARGET = 1.5;
const MEMORY_TARGET = 1.3;

const MIB = option('mib', 10);
const RUNS = option('runs', 2);

const MAPPING = `version: 1
include: ["fleet.yaml"]
machines: "$.vms[*]"
disks: "$.volumes[*]"
fields:
  machine: { name: "$.hostname", memory: "$.ram" }
  disk: { name: "$.label", size: "$.capacity", clusterSize: "$.block", l2Cache: "$.tuning.l2", cleanupInterval: "$.tuning.sweep" }
`;

const SIZES = ['20G', '40G', '100G', '1T'];
const CACHES = ['2560K', '5M', '8M', '128M'];

function machine(i: number): string {
  return `  - hostname: bench-${i}
    ram: 8G
    volumes:
      - label: root
        capacity: ${SIZES[i % 4]}
        block: 64K
        tuning: { l2: ${CACHES[(i >> 2) % 4]}, sweep: 600 }
`;
}

function generate(dir: string): string {
  const file = path.join(dir, 'fleet.yaml');
  const parts = ['vms:\n'];
  let bytes = parts[0]!.length;
  for (let i = 0; bytes < MIB * 1024 * 1024; i++) {
    const text = machine(i);
    parts.push(text);
    bytes += text.length;
  }
  fs.writeFileSync(file, parts.join(''));
  fs.writeFileSync(path.join(dir, 'cachewright.yaml'), MAPPING);
  return file;
}

interface Measure {
  ms: number;
  peakMiB: number;
}

/** Wall time of the whole process (start-up on both sides) and its peak resident set, which a preloaded hook prints at exit. */
function measure(args: string[], cwd: string, peakHook: string): Measure {
  const started = process.hrtime.bigint();
  const child = spawnSync(process.execPath, ['--require', peakHook, ...args], { cwd, encoding: 'utf8', maxBuffer: 1024 * 1024 * 1024, env: { ...process.env, CACHEWRIGHT_JOBS: '1' } });
  const ms = Number(process.hrtime.bigint() - started) / 1e6;
  if (child.status !== 0 && child.status !== 1) throw new Error(`${args.join(' ')} exited ${child.status}: ${child.stderr}`);
  const kib = Number(/PEAK (\d+)/.exec(child.stderr)?.[1]);
  return { ms, peakMiB: kib / 1024 };
}

function best(runs: Measure[]): Measure {
  return { ms: Math.min(...runs.map((r) => r.ms)), peakMiB: Math.min(...runs.map((r) => r.peakMiB)) };
}

function main(): void {
  if (!fs.existsSync(CLI)) throw new Error(`${CLI} is missing: run "npm run build" first`);
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cachewright-bench-large-'));
  try {
    const file = generate(dir);
    const floorScript = path.join(dir, 'parse-only.js');
    fs.writeFileSync(floorScript, `const { parseDocument } = require(${JSON.stringify(require.resolve('yaml'))});
const text = require('node:fs').readFileSync(process.argv[2], 'utf8');
const doc = parseDocument(text);
if (doc.errors.length) process.exit(3);
`);
    const peakHook = path.join(dir, 'peak.js');
    fs.writeFileSync(peakHook, "process.on('exit', () => process.stderr.write('PEAK ' + process.resourceUsage().maxRSS + '\\n'));\n");
    const size = fs.statSync(file).size;
    const floor: Measure[] = [];
    const lint: Measure[] = [];
    for (let run = 0; run < RUNS; run++) {
      floor.push(measure([floorScript, file], dir, peakHook));
      lint.push(measure([CLI, 'lint', '--format', 'json', '--no-images', '--file-size-limit', '64M'], dir, peakHook));
    }
    const f = best(floor);
    const l = best(lint);
    const timeRatio = l.ms / f.ms;
    const memoryRatio = l.peakMiB / f.peakMiB;
    console.log(`definition file: ${(size / 1024 / 1024).toFixed(1)} MiB, best of ${RUNS} runs, one thread`);
    console.log(`yaml parseDocument alone: ${f.ms.toFixed(0)} ms, peak ${f.peakMiB.toFixed(0)} MiB resident`);
    console.log(`cachewright lint:         ${l.ms.toFixed(0)} ms, peak ${l.peakMiB.toFixed(0)} MiB resident`);
    console.log(`time ratio ${timeRatio.toFixed(2)}x (target <= ${TIME_TARGET}x) ${timeRatio <= TIME_TARGET ? 'met' : 'NOT met'}`);
    console.log(`memory ratio ${memoryRatio.toFixed(2)}x (target <= ${MEMORY_TARGET}x) ${memoryRatio <= MEMORY_TARGET ? 'met' : 'NOT met'}`);
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

main();
