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
const RUNS = runsArg > 0 ? Number(process.argv[runsArg + 1]) : 7;
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
const start = process.hrtime.bigint();
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
const ms = Number(process.hrtime.bigint() - start) / 1e6;
console.log(JSON.stringify({ ms, tables, maxRssKiB: peakKiB() }));
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
const start = process.hrtime.bigint();
inspectImage(path, { followChain: false }).then((r) => {
  const ms = Number(process.hrtime.bigint() - start) / 1e6;
  if (r.error) throw new Error(r.error);
  console.log(JSON.stringify({ ms, tables: r.l2TablesAllocated, clusters: r.dataClustersAllocated, maxRssKiB: peakKiB() }));
});
`;

interface Sample {
  ms: number;
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
      const floor: number[] = [];
      const inspect: number[] = [];
      let last: Sample | undefined;
      let floorRss = 0;
      for (let i = 0; i < RUNS; i++) {
        const f = run(FLOOR, path);
        last = run(inspectScript, path);
        if (f.tables !== TABLES || last.tables !== TABLES) throw new Error(`expected ${TABLES} tables, read ${f.tables} / ${last.tables}`);
        floor.push(f.ms);
        floorRss = f.maxRssKiB;
        inspect.push(last.ms);
      }
      const ratio = median(inspect) / median(floor);
      console.log(`${label}: ${TABLES} L2 tables, ${last!.clusters} data clusters`);
      console.log(`  floor (plain reads of L1 + L2 tables): ${median(floor).toFixed(1)} ms   inspect: ${median(inspect).toFixed(1)} ms   ratio ${ratio.toFixed(2)}x (target <= 1.5x)`);
      console.log(`  peak memory of the inspecting process: ${(last!.maxRssKiB / 1024).toFixed(1)} MiB (the floor process: ${(floorRss / 1024).toFixed(1)} MiB)`);
    }
  } finally {
    folder.remove();
  }
}

main();
