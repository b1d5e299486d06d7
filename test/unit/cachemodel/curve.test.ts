// The hit-ratio curve the sizing panel draws, and the throughput estimate beside it.
import { strict as assert } from 'node:assert';
import { DEVICE_CLASSES, entrySizeCurves, modelCache } from '../../../src/core/cachemodel';
import { gaussLegendre } from '../../../src/core/cachemodel/zipf';

const KiB = 1024n;
const MiB = 1024n * KiB;
const GiB = 1024n * MiB;

describe('cachemodel: curves', () => {
  it('whole-table and 4 KiB slice curves side by side, from 2 entries to full coverage', () => {
    const result = entrySizeCurves({ virtualSize: 256n * GiB, clusterSize: 64n * KiB, extendedL2: false, access: { kind: 'zipf', exponent: 0.8 } });
    assert.ok(result.ok);
    const { wholeTable, slice } = result.value;
    assert.ok(slice !== undefined);
    assert.equal(wholeTable.entrySize, 64n * KiB);
    assert.equal(slice.entrySize, 4n * KiB);
    // [CACHE] check value: 256 GiB at 64 KiB clusters needs 32 MiB for full coverage, in either entry size.
    assert.equal(wholeTable.fullCoverageBytes, 32n * MiB);
    assert.equal(slice.fullCoverageBytes, 32n * MiB);
    assert.equal(wholeTable.points.length, 64);
    assert.equal(wholeTable.points[0]?.cacheBytes, 128n * KiB);
    assert.equal(slice.points[0]?.cacheBytes, 8n * KiB);
    assert.equal(wholeTable.points.at(-1)?.hitRatio, 1);
    assert.equal(slice.points.at(-1)?.cacheBytes, 32n * MiB);
  });

  it('no slice curve when no slice smaller than the cluster applies; an explicit slice size is used', () => {
    const small = entrySizeCurves({ virtualSize: 8n * GiB, clusterSize: 4n * KiB, extendedL2: false, access: { kind: 'random' } });
    assert.ok(small.ok);
    assert.equal(small.value.slice, undefined);
    const chosen = entrySizeCurves({ virtualSize: 8n * GiB, clusterSize: 64n * KiB, extendedL2: false, access: { kind: 'random' } }, { sliceSize: 512n, points: 8 });
    assert.ok(chosen.ok);
    assert.equal(chosen.value.slice?.entrySize, 512n);
    assert.equal(chosen.value.slice?.points.length, 8);
  });

  it('[CACHE] uniform over the whole disk: the hit ratio is the covered share, covered = C * cluster_size / entry_bytes', () => {
    for (const entrySize of [64n * KiB, 4n * KiB]) {
      const result = entrySizeCurves({ virtualSize: 64n * GiB, clusterSize: 64n * KiB, extendedL2: false, entrySize, access: { kind: 'random' } }, { points: 16 });
      assert.ok(result.ok);
      for (const point of [...result.value.wholeTable.points, ...(result.value.slice?.points ?? [])]) {
        const covered = (point.cacheBytes * 64n * KiB) / 8n;
        assert.equal(point.hitRatio, Math.min(1, Number(covered) / Number(64n * GiB)));
      }
    }
  });
});

describe('cachemodel: throughput estimate (assumed device latencies, from memory)', () => {
  it('relative = time per I/O at full hit / time with misses; a miss adds one entry-sized read', () => {
    const result = modelCache({ virtualSize: 64n * GiB, clusterSize: 64n * KiB, extendedL2: false, cacheBytes: 4n * MiB, access: { kind: 'random' }, device: 'nvme' });
    assert.ok(result.ok);
    const { hitRatio, throughput } = result.value;
    assert.equal(hitRatio, 0.5); // 4 MiB of the 8 MiB full coverage [IRM]
    const nvme = DEVICE_CLASSES.nvme;
    const data = nvme.accessLatencyUs + (4096 / nvme.bytesPerSecond) * 1e6;
    const metadata = nvme.accessLatencyUs + (65536 / nvme.bytesPerSecond) * 1e6;
    assert.ok(Math.abs(throughput.ioTimeUs - (data + 0.5 * metadata)) < 1e-9);
    assert.ok(Math.abs(throughput.relative - data / (data + 0.5 * metadata)) < 1e-12);
    assert.equal(throughput.device.name, 'nvme');
  });

  it('takes the caller\'s own device figures', () => {
    const result = modelCache({
      virtualSize: 64n * GiB, clusterSize: 64n * KiB, extendedL2: false, cacheBytes: 4n * MiB, access: { kind: 'random' },
      device: { name: 'measured array', accessLatencyUs: 50, bytesPerSecond: 1e9 },
    });
    assert.ok(result.ok);
    assert.equal(result.value.throughput.device.name, 'measured array');
    assert.ok(result.value.throughput.relative < 1);
  });
});

describe('cachemodel: quadrature rule', () => {
  it('8-point Gauss-Legendre integrates polynomials up to degree 15 exactly on [-1, 1] (common practice: numerical analysis)', () => {
    const rule = gaussLegendre(8);
    for (let degree = 0; degree <= 15; degree++) {
      const integral = rule.nodes.reduce((sum, x, i) => sum + (rule.weights[i] as number) * x ** degree, 0);
      const exact = degree % 2 === 1 ? 0 : 2 / (degree + 1);
      assert.ok(Math.abs(integral - exact) < 1e-14, `degree ${degree}: ${integral}`);
    }
  });
});
