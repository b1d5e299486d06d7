// Benchmark (issue 6, the panel's side): what the sizing panel computes on each what-if edit for the
// charted disk, both 64-point curves (whole tables and slices) plus the hit ratio at each mark.
// Prints the time and its ratio to the 20 ms target; asserts nothing (tests never assert on time).
//   npx tsx test/bench/panel-curve.ts
import { chartModel, type ChartInput } from '../../webview/curve-model';

const TARGET_MS = 20;
const KiB = 1024n;
const MiB = 1024n * KiB;
const GiB = 1024n * MiB;
const TiB = 1024n * GiB;

// A disk whose 4 KiB slices number a million (each maps 32 MiB at 64 KiB clusters), and one far larger.
const cases: Array<[string, ChartInput]> = [
  ['1 TiB, 64 KiB clusters (the demo ledger)', { virtualSize: TiB, clusterSize: 64n * KiB, extendedL2: false, entrySize: 4n * KiB, pattern: 'random', requestSize: 8n * KiB, configured: 8n * MiB, effective: 8n * MiB, fullCoverage: 128n * MiB }],
  ['a million 4 KiB slices (32 TiB at 64 KiB)', { virtualSize: 1_000_000n * 32n * MiB, clusterSize: 64n * KiB, extendedL2: false, entrySize: 4n * KiB, pattern: 'random', requestSize: 4n * KiB, configured: 32n * MiB, effective: 32n * MiB, fullCoverage: 4_000_000n * KiB }],
  ['64 TiB at 512 B clusters (2^31 tables)', { virtualSize: 64n * TiB, clusterSize: 512n, extendedL2: false, entrySize: 512n, pattern: 'random', requestSize: 4n * KiB, configured: 32n * MiB, effective: 32n * MiB, fullCoverage: 1024n * GiB }],
];
const patterns = ['random', 'zipf(0.8)', 'zipf(1.2)', '90% on 10%', 'sequential'];

function median(run: () => void, repeats: number): number {
  run();
  const samples: number[] = [];
  for (let i = 0; i < repeats; i++) {
    const start = performance.now();
    run();
    samples.push(performance.now() - start);
  }
  samples.sort((a, b) => a - b);
  return samples[Math.floor(samples.length / 2)] ?? 0;
}

console.log('the panel chart (two 64-point curves and the marks), per what-if edit');
for (const [name, input] of cases) {
  for (const pattern of patterns) {
    const ms = median(() => {
      const outcome = chartModel({ ...input, pattern });
      if (!outcome.ok) throw new Error(outcome.reason);
    }, 15);
    console.log(`${`${name}, ${pattern}`.padEnd(62)} median ${ms.toFixed(2).padStart(7)} ms   ${(ms / TARGET_MS).toFixed(3)} of the ${TARGET_MS} ms target`);
  }
}
