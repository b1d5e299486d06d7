// Benchmark (not a test): `inspectImage` on a sparse image with 2,000 allocated L2 tables, against
// the floor, a node process that only reads the L1 table and the same L2 tables with plain reads.
// Prints the ratio (target: at most 1.5x) and the peak memory of inspecting 1 TiB and 64 TiB images
// with the same allocation (it must not grow with the virtual size).
//   npx tsx test/bench/inspect-sparse.ts [--runs 7]
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { buildSync } from 'esbuild';
import { tempFolder } from '../image/helpers';
import { writeImage, type ClusterSpec } from '../image/qcow2-writer';

const TABLES = 2000;
const CLUSTERS_PER_TABLE = 32;
const CLUSTER_BITS = 16;
const ENTRIES_PER_TABLE = 2 ** CLUSTER_BITS / 8;
const TiB = 1n << 40n;
const runsArg = process.argv.indexOf('--runs');
const RUNS = runsArg > 0 ? Number(process.argv[runsArg + 1]) : 11;
const root = join(__dirname, '../..');

function sparseImage(path: string, virtualSize: bigint): void {
  const l1Needed = Number(virtualSize / (2n ** BigInt(CLUSTER_BITS) * BigInt(ENTRIES_PER_TABLE)));
  const clusters: ClusterSpec[] = [];
  for (let t = 0; t < TABLES; t++) {
    const l1Index = Math.floor((t * l1Needed) / TABLES); // spread over the whole disk
    for (let c = 0; c < CLUSTERS_PER_TABLE; c++) clusters.push({ guest: l1Index * ENTRIES_PER_TABLE + c * 197, kind: 'data' });
  }
  writeImage(path, { version: 3, clusterBits: CLUSTER_BITS, virtualSize, clusters, writeData: false });
}

// The floor: the same file reads the walk needs, and nothing else.
const FLOOR = `
// Peak resident memory of this process alone: /proc's VmHWM is per address space, while getrusage's
// maxRSS on Linux carries over the parent's peak across fork and exec.
function peakKiB() {
  try { return Number(/VmHWM:\\s+(\\d+)/.exec(require('node:fs').readFileSync('/proc/self/status', 'utf8'))[1]); }
  catch { return process.resourceUsage().maxRSS; }
}
const { openSync, readSync, closeSync } = require('node:fs');
const path = process.argv[1];
function once() {
const start = process.hrtime.bigint();
const cpu = process.cpuUsage();
const fd = openSync(path, 'r');
const header = Buffer.alloc(104);
readSync(fd, header, 0, 104, 0);
const cluster = 2 ** header.readUInt32BE(20);
const l1Entries = header.readUInt32BE(36);
const l1 = Buffer.alloc(l1Entries * 8);
readSync(fd, l1, 0, l1.length, Number(header.readBigUInt64BE(40)));
const table = Buffer.alloc(cluster);
let tables = 0;
for (let i = 0; i < l1Entries; i++) {
  const offset = Number(l1.readBigUInt64BE(i * 8) & 0x00fffffffffffe00n);
  if (offset === 0) continue;
  readSync(fd, table, 0, cluster, offset);
  tables++;
}
closeSync(fd);
const used = process.cpuUsage(cpu);
return { ms: Number(process.hrtime.bigint() - start) / 1e6, cpuMs: (used.user + used.system) / 1000, tables };
}
const cold = once();
const warm = once();
console.log(JSON.stringify({ ms: cold.ms, warmMs: warm.ms, cpuMs: cold.cpuMs, warmCpuMs: warm.cpuMs, tables: cold.tables, maxRssKiB: peakKiB() }));
`;

// The reader as it ships: bundled by esbuild (as scripts/build.mjs does), not through a TS loader.
const BUNDLE_NAME = 'image-bundle.js';
const INSPECT = (bundle: string): string => `
// Peak resident memory of this process alone: /proc's VmHWM is per address space, while getrusage's
// maxRSS on Linux carries over the parent's peak across fork and exec.
function peakKiB() {
  try { return Number(/VmHWM:\\s+(\\d+)/.exec(require('node:fs').readFileSync('/proc/self/status', 'utf8'))[1]); }
  catch { return process.resourceUsage().maxRSS; }
}
const { inspectImage } = require(${JSON.stringify(bundle)});
const path = process.argv[1];
async function once() {
  const start = process.hrtime.bigint();
  const cpu = process.cpuUsage();
  const r = await inspectImage(path, { followChain: false });
  const used = process.cpuUsage(cpu);
  if (r.error) throw new Error(r.error);
  return { ms: Number(process.hrtime.bigint() - start) / 1e6, cpuMs: (used.user + used.system) / 1000, tables: r.l2TablesAllocated, clusters: r.dataClustersAllocated };
}
(async () => {
  const cold = await once();
  const warm = await once();
  console.log(JSON.stringify({ ms: cold.ms, warmMs: warm.ms, cpuMs: cold.cpuMs, warmCpuMs: warm.cpuMs, tables: cold.tables, clusters: cold.clusters, maxRssKiB: peakKiB() }));
})();
`;

interface Sample {
  /** First run in a fresh process (cold JIT), and a second run in the same process. */
  ms: number;
  warmMs: number;
  /** The same, as CPU time (user + system, all threads): steadier than wall time on a busy machine. */
  cpuMs: number;
  warmCpuMs: number;
  tables: number;
  maxRssKiB: number;
  clusters?: number;
}

function run(script: string, path: string): Sample {
  const args = ['-e', script, path];
  // A plain node process: without the TypeScript loader this script itself runs under.
  const env = { ...process.env };
  delete env.NODE_OPTIONS;
  const child = spawnSync(process.execPath, args, { cwd: root, encoding: 'utf8', env });
  if (child.status !== 0) throw new Error(child.stderr);
  return JSON.parse(child.stdout.trim().split('\n').pop()!) as Sample;
}

const median = (values: number[]): number => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)]!;

function main(): void {
  const folder = tempFolder('bench');
  try {
    const small = folder.file('sparse-1t.qcow2');
    const large = folder.file('sparse-64t.qcow2');
    sparseImage(small, TiB);
    sparseImage(large, 64n * TiB);
    const bundle = folder.file(BUNDLE_NAME);
    buildSync({ entryPoints: [join(root, 'src/image/index.ts')], bundle: true, platform: 'node', format: 'cjs', target: 'es2022', outfile: bundle, logLevel: 'warning' });
    const inspectScript = INSPECT(bundle);

    for (const [label, path] of [['1 TiB', small], ['64 TiB', large]] as const) {
      run(FLOOR, path); // warm the page cache
      run(inspectScript, path);
      const floor: Sample[] = [];
      const inspect: Sample[] = [];
      for (let i = 0; i < RUNS; i++) {
        // Interleaved, so load from elsewhere on the machine hits both sides alike.
        floor.push(run(FLOOR, path));
        inspect.push(run(inspectScript, path));
      }
      const last = inspect[inspect.length - 1]!;
      if (floor.some((f) => f.tables !== TABLES) || inspect.some((f) => f.tables !== TABLES)) throw new Error(`expected ${TABLES} tables everywhere`);
      const floorRss = floor[floor.length - 1]!.maxRssKiB;
      console.log(`${label}: ${TABLES} L2 tables, ${last.clusters} data clusters, ${RUNS} runs each`);
      const measures = [
        ['fresh process, wall', (x: Sample) => x.ms],
        ['fresh process, CPU', (x: Sample) => x.cpuMs],
        ['second run, wall', (x: Sample) => x.warmMs],
        ['second run, CPU', (x: Sample) => x.warmCpuMs],
      ] as const;
      for (const [kind, pick] of measures) {
        const f = floor.map(pick);
        const t = inspect.map(pick);
        console.log(`  ${kind.padEnd(20)} floor ${median(f).toFixed(1).padStart(6)} ms (best ${Math.min(...f).toFixed(1).padStart(5)})  inspect ${median(t).toFixed(1).padStart(6)} ms (best ${Math.min(...t).toFixed(1).padStart(5)})` +
          `  ratio ${(median(t) / median(f)).toFixed(2)}x median, ${(Math.min(...t) / Math.min(...f)).toFixed(2)}x best (target <= 1.5x)`);
      }
      console.log(`  peak memory of the inspecting process: ${(last.maxRssKiB / 1024).toFixed(1)} MiB (the floor process: ${(floorRss / 1024).toFixed(1)} MiB)`);
    }
  } finally {
    folder.remove();
  }
}

main();
