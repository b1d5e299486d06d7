// Benchmark (issue 13): `cachewright compare BASE HEAD --format json` over two generated trees of
// 3,000 definition files (head changes a tenth of them: caches raised, disks grown, machines moved
// between hosts) against one `cachewright lint --format json` of the head tree. Compare lints both
// trees, so 2x is the floor; the target is at most 2.2x. Prints both times and the ratio; asserts
// nothing (tests never assert on wall-clock time). Needs the built CLI (npm run build).
//   npx tsx test/bench/compare.ts [--files N] [--runs N]
import { spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { CLI, option } from './lib/options';
import { HOSTS, HOST_FLEET_MAPPING as MAPPING } from './lib/host-fleet';

const TARGET_RATIO = 2.2;

const FILES = option('files', 3000);
const RUNS = option('runs', 3);


const SIZES = ['20G', '40G', '100G', '500G', '1T', '2T'];
const CACHES = ['2.5M', '5M', '8M', '16M', '3000K', undefined];

function definition(index: number, changed: boolean): string {
  const vms: string[] = [];
  for (let m = 0; m < 2; m++) {
    const volumes: string[] = [];
    for (let d = 0; d < 3; d++) {
      const k = index * 6 + m * 3 + d;
      const cache = changed && d === 0 ? '128M' : CACHES[k % CACHES.length];
      const size = changed && d === 1 ? '4T' : SIZES[k % SIZES.length];
      volumes.push(`      - label: vol${d}\n        capacity: ${size}\n        block: 64K\n${cache ? `        tuning: { l2: ${cache}, sweep: 600 }\n` : ''}`);
    }
    const host = (index * 2 + m + (changed ? 1 : 0)) % HOSTS;
    vms.push(`  - hostname: vm-${index}-${m}\n    ram: 16G\n    hv: hv-${host}\n    volumes:\n${volumes.join('')}`);
  }
  return `vms:\n${vms.join('')}`;
}

function makeTree(dir: string, head: boolean): void {
  fs.writeFileSync(path.join(dir, 'cachewright.yaml'), MAPPING);
  for (let i = 0; i < FILES; i++) {
    const file = path.join(dir, 'defs', `rack-${i % 30}`, `vm-${i}.yaml`);
    fs.mkdirSync(path.dirname(file), { recursive: true });
    fs.writeFileSync(file, definition(i, head && i % 10 === 0));
  }
}

function timed(args: string[], cwd: string): number {
  const start = process.hrtime.bigint();
  const run = spawnSync(process.execPath, [CLI, ...args], { cwd, encoding: 'utf8', maxBuffer: 1024 * 1024 * 1024 });
  const ms = Number(process.hrtime.bigint() - start) / 1e6;
  if (run.status === 2 || run.status === null) throw new Error(`cachewright ${args.join(' ')} failed: ${run.stderr}`);
  return ms;
}

const best = (runs: number[]) => Math.min(...runs);

function main(): void {
  if (!fs.existsSync(CLI)) throw new Error(`${CLI} is missing: run "npm run build" first`);
  const top = fs.mkdtempSync(path.join(os.tmpdir(), 'cachewright-bench-compare-'));
  try {
    const base = path.join(top, 'base');
    const head = path.join(top, 'head');
    fs.mkdirSync(base);
    fs.mkdirSync(head);
    makeTree(base, false);
    makeTree(head, true);
    const lint: number[] = [];
    const compare: number[] = [];
    for (let r = 0; r < RUNS; r++) {
      lint.push(timed(['lint', '--format', 'json'], head));
      compare.push(timed(['compare', base, head, '--format', 'json'], top));
    }
    const ratio = best(compare) / best(lint);
    console.log(`${FILES} files per tree, 2 machines and 6 disks per file, best of ${RUNS}`);
    console.log(`lint of head:          ${best(lint).toFixed(0)} ms`);
    console.log(`compare base and head: ${best(compare).toFixed(0)} ms`);
    console.log(`ratio: ${ratio.toFixed(2)}x (target at most ${TARGET_RATIO}x) ${ratio <= TARGET_RATIO ? 'within target' : 'OVER TARGET'}`);
  } finally {
    fs.rmSync(top, { recursive: true, force: true });
  }
}

main();
