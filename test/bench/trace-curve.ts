// Benchmark (not a test): the measured curve of `cachewright curve` against the floor of reading the
// same trace in Node, and its peak memory on a long trace.
//  1. a 5M-request I/O log (version 3): the exact curve against a node process that only reads the
//     file and splits it into lines and fields (target: at most 2.5x, in CPU time);
//  2. a 20M-request CSV over 100,000 distinct cache entries: peak resident memory of the exact curve
//     (target: under 250 MiB) and with --sample 0.01 (target: under 150 MiB).
// Each figure is the best of --runs runs, all measured in this one run.
//   npm run build && npx tsx test/bench/trace-curve.ts [--runs 3] [--keep DIR]
import { spawnSync } from 'node:child_process';
import { createWriteStream, mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { once } from 'node:events';
import { mulberry32 as generator } from '../unit/cachemodel/lru-simulation';

const runsArg = process.argv.indexOf('--runs');
const RUNS = runsArg > 0 ? Number(process.argv[runsArg + 1]) : 3;
const root = join(__dirname, '../..');
const CLI = join(root, 'dist', 'cli.js');

// 4 KiB clusters, whole-table cache entries: one entry maps 2 MiB. 100,000 entries = 200,000 MiB.
const ENTRIES = 100_000;
const SPAN = 2 * 1024 * 1024;
const GEOMETRY = ['--size', '256G', '--cluster-size', '4K'];


/** Requests over ENTRIES cache entries: 80% of them on a hot 10% (4 KiB to 64 KiB, 4 KiB aligned). */
async function writeTrace(path: string, requests: number, line: (i: number, offset: number, length: number, write: boolean) => string, header = ''): Promise<void> {
  const random = generator(20261203);
  const out = createWriteStream(path);
  let batch = header;
  for (let i = 0; i < requests; i++) {
    const hot = random() < 0.8;
    const entry = hot ? Math.floor(random() * (ENTRIES / 10)) * 10 : Math.floor(random() * ENTRIES);
    const offset = entry * SPAN + Math.floor(random() * 480) * 4096;
    const length = 4096 * (1 + Math.floor(random() * random() * 16));
    batch += line(i, offset, length, random() < 0.3);
    if (batch.length > 1 << 20) {
      if (!out.write(batch)) await once(out, 'drain');
      batch = '';
    }
  }
  out.end(batch);
  await once(out, 'finish');
}

// Peak resident memory of the child alone (/proc's VmHWM is per address space).
const PEAK = `function peakKiB() {
  try { return Number(/VmHWM:\\s+(\\d+)/.exec(require('node:fs').readFileSync('/proc/self/status', 'utf8'))[1]); }
  catch { return process.resourceUsage().maxRSS; }
}`;

// The floor: stream the file, decode each chunk, split it into lines and each line into fields.
const FLOOR = `${PEAK}
const { createReadStream } = require('node:fs');
(async () => {
  const cpu = process.cpuUsage();
  let carry = '';
  let fields = 0;
  for await (const chunk of createReadStream(process.argv[1], { highWaterMark: 1 << 20 })) {
    const lines = (carry + chunk.toString('latin1')).split('\\n');
    carry = lines.pop();
    for (const line of lines) fields += line.split(' ').length;
  }
  const used = process.cpuUsage(cpu);
  console.log(JSON.stringify({ cpu: (used.user + used.system) / 1000, peak: peakKiB(), fields }));
})();`;

const CURVE = `${PEAK}
const { runCommand } = require(${JSON.stringify(CLI)});
(async () => {
  const cpu = process.cpuUsage();
  let out = '';
  const code = await runCommand(process.argv.slice(1), { stdout: (t) => (out += t), stderr: (t) => process.stderr.write(t), cwd: process.cwd(), stderrIsTTY: false });
  const used = process.cpuUsage(cpu);
  if (code !== 0) process.exit(code);
  const report = JSON.parse(out);
  console.log(JSON.stringify({ cpu: (used.user + used.system) / 1000, peak: peakKiB(), requests: report.trace.requests, lookups: report.lookups, entries: report.entriesTouched }));
})();`;

interface Measure {
  cpu: number;
  peak: number;
  [key: string]: number;
}

function run(script: string, args: string[]): Measure {
  const child = spawnSync(process.execPath, ['-e', script, ...args], { encoding: 'utf8', maxBuffer: 1 << 24 });
  if (child.status !== 0) throw new Error(`child failed (${child.status}): ${child.stderr}`);
  return JSON.parse(child.stdout.trim().split('\n').at(-1) as string) as Measure;
}

function best(script: string, args: string[]): Measure {
  const runs = Array.from({ length: RUNS }, () => run(script, args));
  return runs.reduce((a, b) => (b.cpu < a.cpu ? b : a));
}

const mib = (kib: number): string => `${(kib / 1024).toFixed(0)} MiB`;
const seconds = (ms: number): string => `${(ms / 1000).toFixed(2)} s`;

async function main(): Promise<void> {
  const keepArg = process.argv.indexOf('--keep');
  const dir = keepArg > 0 ? (process.argv[keepArg + 1] as string) : mkdtempSync(join(tmpdir(), 'cachewright-bench-trace-'));
  try {
    const log = join(dir, 'five-million.log');
    if (!exists(log)) {
      await writeTrace(log, 5_000_000, (i, offset, length, write) => `${i * 3} /dev/vdb ${write ? 'write' : 'read'} ${offset} ${length}\n`, 'fio version 3 iolog\n0 /dev/vdb add\n1 /dev/vdb open\n');
    }
    const floor = best(FLOOR, [log]);
    const exact = best(CURVE, ['curve', log, ...GEOMETRY, '--format', 'json']);
    const sampled = best(CURVE, ['curve', log, ...GEOMETRY, '--sample', '0.01', '--format', 'json']);
    console.log(`5M-request I/O log (${(statSync(log).size / 2 ** 20).toFixed(0)} MiB, ${exact.lookups} lookups over ${exact.entries} entries):`);
    console.log(`  floor (read, split lines and fields)  ${seconds(floor.cpu)} CPU`);
    console.log(`  exact curve                           ${seconds(exact.cpu)} CPU  ratio ${(exact.cpu / floor.cpu).toFixed(2)}x (target <= 2.5x)`);
    console.log(`  sampled curve, rate 0.01              ${seconds(sampled.cpu)} CPU  ratio ${(sampled.cpu / floor.cpu).toFixed(2)}x`);

    const csv = join(dir, 'twenty-million.csv');
    if (!exists(csv)) await writeTrace(csv, 20_000_000, (_i, offset, length, write) => `${offset},${length}${write ? ',w' : ''}\n`);
    const longExact = run(CURVE, ['curve', csv, ...GEOMETRY, '--format', 'json']);
    const longSampled = run(CURVE, ['curve', csv, ...GEOMETRY, '--sample', '0.01', '--format', 'json']);
    const floorLong = run(FLOOR, [csv]);
    console.log(`20M-request CSV (${(statSync(csv).size / 2 ** 20).toFixed(0)} MiB, ${longExact.entries} distinct entries), peak resident memory:`);
    console.log(`  floor (read, split lines and fields)  ${mib(floorLong.peak)}`);
    console.log(`  exact curve                           ${mib(longExact.peak)} (target < 250 MiB)  ${seconds(longExact.cpu)} CPU`);
    console.log(`  sampled curve, rate 0.01              ${mib(longSampled.peak)} (target < 150 MiB)  ${seconds(longSampled.cpu)} CPU`);
  } finally {
    if (keepArg < 0) rmSync(dir, { recursive: true, force: true });
  }
}

function exists(path: string): boolean {
  try {
    return statSync(path).size > 0;
  } catch {
    return false;
  }
}

main().catch((error: unknown) => {
  console.error(error);
  process.exitCode = 1;
});
