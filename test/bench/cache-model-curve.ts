// Benchmark (issue 6): the panel's 64-point hit-ratio curve for a working set of a million cache
// entries must take under 20 ms. Prints the time per curve and its ratio to the target; it asserts
// nothing (tests never assert on wall-clock time).
//   npx tsx test/bench/cache-model-curve.ts
import { entrySizeCurves, prepareCacheModel, type AccessPattern, type CacheModelGeometryInput } from '../../src/core/cachemodel';

const TARGET_MS = 20;
const KiB = 1024n;
const MiB = 1024n * KiB;

// 64 KiB clusters: one whole table maps 512 MiB, so a million tables cover 500 TiB; with 4 KiB slices
// (32 MiB each) a million slices cover 32 TiB.
const wholeTableDisk: CacheModelGeometryInput = { virtualSize: 1_000_000n * 512n * MiB, clusterSize: 64n * KiB, extendedL2: false, access: { kind: 'random' } };
const sliceDisk: CacheModelGeometryInput = { ...wholeTableDisk, virtualSize: 1_000_000n * 32n * MiB, entrySize: 4n * KiB };

const patterns: AccessPattern[] = [
  { kind: 'zipf', exponent: 0.8 },
  { kind: 'zipf', exponent: 1.2 },
  { kind: 'concentrated', share: 0.9, fraction: 0.1 },
  { kind: 'random' },
  { kind: 'sequential' },
];

function time(run: () => void, repeats: number): { first: number; median: number } {
  const first = performance.now();
  run();
  const firstMs = performance.now() - first;
  const samples: number[] = [];
  for (let i = 0; i < repeats; i++) {
    const start = performance.now();
    run();
    samples.push(performance.now() - start);
  }
  samples.sort((a, b) => a - b);
  return { first: firstMs, median: samples[Math.floor(samples.length / 2)] ?? firstMs };
}

function line(label: string, result: { first: number; median: number }): void {
  const ratio = result.median / TARGET_MS;
  console.log(`${label.padEnd(46)} first ${result.first.toFixed(2).padStart(7)} ms   median ${result.median.toFixed(2).padStart(7)} ms   ${ratio.toFixed(3)} of the ${TARGET_MS} ms target`);
}

console.log('64-point curve (prepare + solve), working set of 1,000,000 cache entries');
for (const [name, disk] of [['whole tables', wholeTableDisk], ['4 KiB slices', sliceDisk]] as const) {
  for (const access of patterns) {
    const input = { ...disk, access };
    let entries = 0;
    const result = time(() => {
      const prepared = prepareCacheModel(input);
      if (!prepared.ok) throw new Error(prepared.error.message);
      entries = prepared.value.entries;
      if (prepared.value.curve(64).points.length !== 64) throw new Error('expected 64 points');
    }, 25);
    if (entries !== 1_000_000) throw new Error(`expected a million entries, got ${entries}`);
    line(`${name}, ${access.kind}${access.kind === 'zipf' ? ` s=${access.exponent}` : access.kind === 'concentrated' ? ` ${access.share}/${access.fraction}` : ''}`, result);
  }
}

console.log('\nthe panel pair (whole-table and slice curves side by side), 1 TiB disk, zipf s=0.8');
line('entrySizeCurves, 64 points each', time(() => {
  const curves = entrySizeCurves({ ...wholeTableDisk, virtualSize: 1024n * 1024n * MiB, access: { kind: 'zipf', exponent: 0.8 } });
  if (!curves.ok) throw new Error(curves.error.message);
}, 25));
