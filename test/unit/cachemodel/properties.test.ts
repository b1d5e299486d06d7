// Properties every steady-state hit ratio has, whatever the pattern (common practice; for LRU under
// independent references the hit ratio grows with cache size, and a cache holding every touched
// entry never misses [IRM]): in [0, 1], non-decreasing in cache size, 1 at full coverage.
import { strict as assert } from 'node:assert';
import fc from 'fast-check';
import { prepareCacheModel, type AccessPattern } from '../../../src/core/cachemodel';

const access: fc.Arbitrary<AccessPattern> = fc.oneof(
  fc.constant<AccessPattern>({ kind: 'random' }),
  fc.constant<AccessPattern>({ kind: 'sequential' }),
  fc.double({ min: 0, max: 2, noNaN: true }).map((exponent): AccessPattern => ({ kind: 'zipf', exponent })),
  fc
    .tuple(fc.double({ min: 0, max: 1, noNaN: true }), fc.double({ min: 0.001, max: 0.999, noNaN: true }))
    .map(([share, fraction]): AccessPattern => ({ kind: 'concentrated', share, fraction })),
);

const disk = fc
  .record({
    clusterBits: fc.integer({ min: 9, max: 21 }),
    sliceShift: fc.integer({ min: 0, max: 12 }),
    extended: fc.boolean(),
    spans: fc.integer({ min: 1, max: 20_000 }),
    offsetFraction: fc.double({ min: 0, max: 0.9, noNaN: true }),
    lengthFraction: fc.double({ min: 0.0001, max: 1, noNaN: true }),
    ioBits: fc.integer({ min: 9, max: 20 }),
    access,
  })
  .map((d) => {
    const clusterSize = 1n << BigInt(d.clusterBits);
    const extendedL2 = d.extended && d.clusterBits >= 14;
    const entrySize = 1n << BigInt(Math.max(9, d.clusterBits - d.sliceShift));
    const span = (entrySize / (extendedL2 ? 16n : 8n)) * clusterSize;
    const virtualSize = BigInt(d.spans) * span - span / 3n;
    const offset = BigInt(Math.floor(Number(virtualSize) * d.offsetFraction));
    const rest = virtualSize - offset;
    const length = BigInt(Math.max(1, Math.floor(Number(rest) * d.lengthFraction)));
    return { virtualSize, clusterSize, extendedL2, entrySize, workingSet: { offset, length: length > rest ? rest : length }, ioSize: 1n << BigInt(d.ioBits), access: d.access };
  });

describe('cachemodel: properties', () => {
  it('hit ratio in [0, 1], non-decreasing with cache size, 1 at full coverage; curves agree', () => {
    fc.assert(
      fc.property(disk, fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 2, maxLength: 6 }), (input, fractions) => {
        const prepared = prepareCacheModel(input);
        if (!prepared.ok) return false;
        const model = prepared.value;
        const sizes = fractions.map((f) => BigInt(Math.floor(f * Number(model.fullCoverageBytes) * 1.2))).sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
        let previous = -1;
        for (const size of sizes) {
          const report = model.at(size);
          if (!(report.hitRatio >= 0 && report.hitRatio <= 1)) return false;
          if (report.hitRatio < previous - 1e-12) return false;
          if (!(report.missesPer1000 >= 0 && report.throughput.relative > 0 && report.throughput.relative <= 1)) return false;
          previous = report.hitRatio;
        }
        const full = model.at(model.fullCoverageBytes);
        if (full.hitRatio !== 1 || full.missesPer1000 !== 0 || full.throughput.relative !== 1) return false;
        const curve = model.curve(16);
        const points = curve.points;
        if (points.length !== Math.min(16, Math.max(1, model.entries - 1))) return false;
        const last = points[points.length - 1];
        if (last === undefined || last.hitRatio !== 1 || last.cacheBytes !== BigInt(Math.max(2, model.entries)) * curve.entrySize) return false;
        for (let i = 1; i < points.length; i++) {
          const [a, b] = [points[i - 1], points[i]];
          if (a === undefined || b === undefined || b.capacityEntries <= a.capacityEntries || b.hitRatio < a.hitRatio - 1e-12) return false;
        }
        return true;
      }),
      { numRuns: 300 },
    );
  });

  it('a million Zipf entries: non-decreasing even one entry apart, along the whole curve', () => {
    for (const exponent of [0.3, 0.8, 1.0, 2.5]) {
      const prepared = prepareCacheModel({ virtualSize: 1_000_000n * 512n * 1024n * 1024n, clusterSize: 65536n, extendedL2: false, access: { kind: 'zipf', exponent } });
      assert.ok(prepared.ok);
      let previous = 0;
      for (const point of prepared.value.curve(64).points) {
        const c = point.capacityEntries;
        const [here, next] = [prepared.value.hitRatioAt(c), prepared.value.hitRatioAt(c + 1)];
        assert.ok(here >= previous - 1e-12 && next >= here - 1e-12, `s=${exponent} C=${c}: ${previous} ${here} ${next}`);
        assert.ok(here >= 0 && next <= 1);
        // The curve's warm-started solves land on the same roots as a cold solve at that size.
        assert.ok(Math.abs(point.hitRatio - here) <= 1e-9, `s=${exponent} C=${c}: curve ${point.hitRatio} vs ${here}`);
        previous = here;
      }
    }
  });

  it('a bad input is a problem naming the field, never an exception', () => {
    const result = prepareCacheModel({ virtualSize: 0n, clusterSize: 65536n, extendedL2: false, access: { kind: 'random' } });
    assert.ok(!result.ok);
    assert.equal(result.error.field, 'virtualSize');
    const zipf = prepareCacheModel({ virtualSize: 1n << 30n, clusterSize: 65536n, extendedL2: false, access: { kind: 'zipf', exponent: Number.NaN } });
    assert.ok(!zipf.ok);
    assert.match(zipf.error.message, /Zipf exponent NaN is out of range/);
    const device = prepareCacheModel({ virtualSize: 1n << 30n, clusterSize: 65536n, extendedL2: false, access: { kind: 'random' }, device: { name: 'x', accessLatencyUs: -1, bytesPerSecond: 1 } });
    assert.ok(!device.ok);
    assert.equal(device.error.field, 'device.accessLatencyUs');
  });
});
