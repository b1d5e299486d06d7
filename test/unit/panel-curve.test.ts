// The sizing panel's hit-ratio chart as a pure function (webview/curve-model.ts): where the marks sit on
// the log size axis, the curves' shape and the hit ratio read at each mark.
// Sources: entry counts and full-coverage sizes from the qcow2 specification's L2 geometry [SPEC]
// (one 8-byte entry per cluster, an L2 table is one cluster; the check values in docs/sources.md); the hit
// ratio under uniform access is C/N, cached entries over entries [IRM]; skewed access follows the
// characteristic-time approximation [CHE]; binary size labels per IEC 80000-13 [IEC].
import { strict as assert } from 'node:assert';
import { CHART, chartModel, hitRatioText, xOf, type ChartInput, type ChartModel } from '../../webview/curve-model';

const KiB = 1024n;
const MiB = 1024n * KiB;
const GiB = 1024n * MiB;
const TiB = 1024n * GiB;
const LEFT = CHART.left;
const RIGHT = CHART.width - CHART.right;

function chart(input: ChartInput): ChartModel {
  const outcome = chartModel(input);
  if (!outcome.ok) assert.fail(outcome.reason);
  return outcome.chart;
}

// 1 TiB with 64 KiB clusters: 16 Mi clusters, 8 B each = 128 MiB of L2 tables [SPEC; docs/sources.md check values].
const ledger: ChartInput = {
  virtualSize: TiB, clusterSize: 64n * KiB, extendedL2: false, entrySize: 4n * KiB,
  pattern: 'random', requestSize: 8n * KiB, configured: 8n * MiB, effective: 8n * MiB, fullCoverage: 128n * MiB,
};

describe('panel curve: the chart model', () => {
  it('draws the whole-table and the 4 KiB slice curves side by side, both ending at full coverage (128 MiB) at 100 % [SPEC]', () => {
    const model = chart(ledger);
    assert.deepEqual(model.series.map((s) => [s.id, s.entrySize, s.inUse]), [['table', 64n * KiB, false], ['slice', 4n * KiB, true]]);
    for (const series of model.series) {
      const last = series.points[series.points.length - 1];
      assert.ok(last);
      assert.equal(series.fullCoverageBytes, 128n * MiB);
      assert.equal(last.cacheBytes, 128n * MiB);
      assert.equal(last.hitRatio, 1);
      assert.equal(series.points.length, 64);
    }
    // The whole-table curve starts at the driver's floor of 2 entries: 2 tables of 64 KiB; slices at 2 x 4 KiB.
    assert.equal(model.series[0]?.points[0]?.cacheBytes, 128n * KiB);
    assert.equal(model.series[1]?.points[0]?.cacheBytes, 8n * KiB);
  });

  it('points are monotone: sizes ascend left to right, hit ratio never falls (y never rises)', () => {
    for (const pattern of ['random', 'zipf(0.8)', '90% on 10%', 'sequential']) {
      const model = chart({ ...ledger, pattern });
      for (const series of model.series) {
        series.points.forEach((p, i) => {
          const before = series.points[i - 1];
          assert.ok(p.hitRatio >= 0 && p.hitRatio <= 1, `${pattern} ${series.id}: ${p.hitRatio}`);
          if (!before) return;
          assert.ok(p.cacheBytes > before.cacheBytes && p.x > before.x, `${pattern} ${series.id}: sizes ascend at ${i}`);
          assert.ok(p.hitRatio >= before.hitRatio - 1e-12, `${pattern} ${series.id}: hit ratio falls at ${i}`);
          assert.ok(p.y <= before.y + 1e-9, `${pattern} ${series.id}: y rises at ${i}`);
        });
        assert.equal(series.points[series.points.length - 1]?.hitRatio, 1, `${pattern} ${series.id}: 100 % at full coverage`);
      }
    }
  });

  it('the configured mark under uniform access reads C/N: 8 MiB holds 128 of 2048 tables, 2048 of 32768 slices [IRM]', () => {
    const model = chart(ledger);
    const configured = model.marks.find((m) => m.id === 'configured');
    assert.ok(configured);
    // One table maps 8192 entries x 64 KiB = 512 MiB, so 1 TiB needs 2048 tables; a 4 KiB slice maps 32 MiB: 32768 slices [SPEC].
    assert.equal(configured.ratios.table, 128 / 2048);
    assert.equal(configured.ratios.slice, 2048 / 32768);
    assert.equal(configured.hitRatio, configured.ratios.slice, 'the curve in use is the slice curve');
    const full = model.marks.find((m) => m.id === 'full');
    assert.equal(full?.hitRatio, 1);
    assert.equal(full?.ratios.table, 1);
  });

  it('marks sit at the log-scale x of their sizes: 8 KiB at the left edge, 128 MiB at the right, 8 MiB 10 of 14 octaves along', () => {
    const model = chart(ledger);
    assert.equal(model.minBytes, 8n * KiB);
    assert.equal(model.maxBytes, 128n * MiB);
    const at = (id: string): number | undefined => model.marks.find((m) => m.id === id)?.x;
    assert.equal(at('full'), RIGHT);
    const expected = LEFT + ((23 - 13) / (27 - 13)) * (RIGHT - LEFT); // 8 MiB = 2^23, 8 KiB = 2^13, 128 MiB = 2^27
    assert.ok(Math.abs((at('configured') ?? NaN) - expected) < 0.01, `${at('configured')} vs ${expected}`);
    assert.equal(at('effective'), at('configured'));
    // A log axis: each doubling is the same distance.
    const step = (a: bigint): number => xOf(a * 2n, model.minBytes, model.maxBytes) - xOf(a, model.minBytes, model.maxBytes);
    assert.ok(Math.abs(step(16n * KiB) - step(16n * MiB)) < 1e-9);
  });

  it('a what-if change moves the configured mark: 64 MiB is one octave left of full coverage and reads 50 % [IRM]', () => {
    const before = chart(ledger).marks.find((m) => m.id === 'configured');
    const after = chart({ ...ledger, configured: 64n * MiB, effective: 64n * MiB }).marks.find((m) => m.id === 'configured');
    assert.ok(before && after);
    assert.ok(after.x > before.x);
    assert.ok(Math.abs(after.x - (RIGHT - (RIGHT - LEFT) / 14)) < 0.01);
    assert.equal(after.ratios.table, 1024 / 2048);
    assert.equal(after.ratios.slice, 16384 / 32768);
  });

  it('a what-if cluster change redraws both curves: 1 TiB at 1 MiB clusters needs 8 MiB of whole tables, so 8 MiB reads 100 % [SPEC; docs/sources.md check values]', () => {
    const model = chart({ ...ledger, clusterSize: MiB, fullCoverage: 8n * MiB });
    assert.equal(model.series.find((s) => s.id === 'table')?.fullCoverageBytes, 8n * MiB);
    assert.equal(model.series.find((s) => s.id === 'table')?.points.length, 7, 'a 1 MiB table maps 128 GiB: 8 tables, curve from 2 to 8 entries');
    assert.equal(model.marks.find((m) => m.id === 'configured')?.ratios.table, 1);
    assert.equal(model.maxBytes, 8n * MiB);
    assert.equal(model.marks.find((m) => m.id === 'full')?.x, RIGHT);
  });

  it('a configured size above full coverage widens the axis; the curve stays flat at 100 % beyond full coverage', () => {
    const model = chart({ ...ledger, configured: 512n * MiB, effective: 128n * MiB });
    assert.equal(model.maxBytes, 512n * MiB);
    assert.equal(model.marks.find((m) => m.id === 'configured')?.x, RIGHT);
    assert.equal(model.marks.find((m) => m.id === 'configured')?.hitRatio, 1);
    for (const series of model.series) assert.match(series.path, new RegExp(`L${RIGHT},${CHART.top}$`));
  });

  it('with clusters of 4 KiB or less there is no smaller slice to draw: only the whole-table curve', () => {
    // 1 TiB at 4 KiB clusters needs 2 GiB of L2 tables [SPEC; docs/sources.md check values].
    const model = chart({ ...ledger, clusterSize: 4n * KiB, entrySize: 4n * KiB, configured: undefined, effective: 32n * MiB, fullCoverage: 2n * GiB });
    assert.deepEqual(model.series.map((s) => s.id), ['table']);
    assert.equal(model.series[0]?.fullCoverageBytes, 2n * GiB);
    assert.deepEqual(model.marks.map((m) => m.id), ['effective', 'full']);
    assert.equal(model.marks.find((m) => m.id === 'effective')?.hitRatio, (32 * 1024 / 4) / (2 * 1024 * 1024 / 4)); // C/N [IRM]
  });

  it('whole tables in use: 20 GiB at 256 KiB clusters, 768 KiB of whole tables against 640 KiB of 4 KiB slices [SPEC]', () => {
    const model = chart({ ...ledger, virtualSize: 20n * GiB, clusterSize: 256n * KiB, entrySize: 256n * KiB, configured: undefined, effective: 768n * KiB, fullCoverage: 768n * KiB });
    assert.equal(model.series.find((s) => s.inUse)?.id, 'table');
    assert.equal(model.series.find((s) => s.id === 'table')?.fullCoverageBytes, 768n * KiB);
    assert.equal(model.series.find((s) => s.id === 'slice')?.fullCoverageBytes, 640n * KiB);
  });

  it('skewed access beats C/N at the same size (LRU keeps the popular entries) [CHE]', () => {
    const configured = chart({ ...ledger, pattern: 'zipf(0.8)' }).marks.find((m) => m.id === 'configured');
    assert.ok(configured && configured.hitRatio > 2048 / 32768);
    assert.ok(configured.hitRatio < 1);
  });

  it('labels of marks at the same size go on separate rows; the tick labels are powers of two in binary units [IEC]', () => {
    const model = chart(ledger);
    const configured = model.marks.find((m) => m.id === 'configured');
    const effective = model.marks.find((m) => m.id === 'effective');
    assert.notEqual(configured?.labelRow, effective?.labelRow);
    assert.equal(model.marks.find((m) => m.id === 'full')?.labelAnchor, 'end');
    assert.ok(model.xTicks.length >= 3 && model.xTicks.length <= 8);
    for (const tick of model.xTicks) assert.match(tick.label, /^\d+ (B|KiB|MiB|GiB|TiB)$/);
    assert.ok(model.xTicks.every((t, i) => i === 0 || t.position > (model.xTicks[i - 1]?.position ?? 0)));
    assert.deepEqual(model.yTicks.map((t) => t.label), ['0 %', '25 %', '50 %', '75 %', '100 %']);
  });

  it('the text summary names the workload and the hit ratio at each mark', () => {
    const model = chart(ledger);
    assert.match(model.summary, /random access/);
    assert.match(model.summary, /configured 8 MiB: 6\.2 %/);
    assert.match(model.summary, /full coverage 128 MiB: 100 %/);
  });

  it('a pattern the model cannot read gives a reason, not a chart', () => {
    const outcome = chartModel({ ...ledger, pattern: 'bursty' });
    assert.equal(outcome.ok, false);
    if (!outcome.ok) assert.match(outcome.reason, /unknown access pattern "bursty": use random, sequential, mixed, zipf\(S\)/);
  });

  it('hit ratios print rounded down, so only full coverage reads 100 %', () => {
    assert.equal(hitRatioText(1), '100 %');
    assert.equal(hitRatioText(0.9999), '99.9 %');
    assert.equal(hitRatioText(0.5), '50 %');
    assert.equal(hitRatioText(0.0625), '6.2 %');
    assert.equal(hitRatioText(0), '0 %');
  });
});

describe('panel curve: the measured curve beside the modelled ones', () => {
  // A measured curve as the engine reports it: points with exact hit ratios (here a made-up step: 0
  // below 16 MiB, 0.995 from there; the chart only draws what it is given).
  const points = [1n, 2n, 4n, 8n, 16n, 32n].map((m) => ({ cacheBytes: m * MiB, hitRatio: m >= 16n ? 0.995 : 0 }));
  const traced: ChartInput = { ...ledger, measured: { points, recommended: 16n * MiB } };

  it('draws it as a third series, not in use, ending at the working set and flat to the axis end', () => {
    const model = chart(traced);
    const measured = model.series.find((s) => s.id === 'measured');
    assert.ok(measured);
    assert.equal(measured.inUse, false);
    assert.deepEqual(measured.points.map((p) => p.cacheBytes), points.map((p) => p.cacheBytes));
    assert.equal(measured.fullCoverageBytes, 32n * MiB);
    assert.match(measured.path, new RegExp(`L${RIGHT},[0-9.]+$`), 'flat to the right edge');
    assert.deepEqual(model.series.map((s) => s.id), ['table', 'slice', 'measured']);
  });

  it('marks the recommended cache and reads the measured ratio at every mark (the point at or below it)', () => {
    const model = chart(traced);
    const byId = new Map(model.marks.map((m) => [m.id, m]));
    assert.deepEqual([...byId.keys()], ['configured', 'effective', 'recommended', 'full']);
    assert.equal(byId.get('recommended')?.bytes, 16n * MiB);
    assert.equal(byId.get('recommended')?.ratios.measured, 0.995);
    assert.equal(byId.get('effective')?.ratios.measured, 0, '8 MiB, below the step');
    assert.equal(byId.get('full')?.ratios.measured, 0.995, 'beyond the working set the ratio stays at its last value');
    // The modelled ratios stay as they were: C/N for the effective 8 MiB of 4 KiB slices [IRM].
    assert.equal(byId.get('effective')?.ratios.slice, 2048 / 32768);
    assert.match(model.summary, /Measured on the trace: .*measured target 16 MiB: 99\.5 %/);
  });

  it('without a measured curve nothing changes: two series, three marks', () => {
    const model = chart(ledger);
    assert.deepEqual(model.series.map((s) => s.id), ['table', 'slice']);
    assert.ok(!model.marks.some((m) => m.id === 'recommended'));
  });
});
