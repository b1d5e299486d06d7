// The hit-ratio chart as plain data: curves from the pure cache model, laid out on a log-scaled size
// axis, with the marks the panel draws. No DOM here, so the geometry is testable on its own; curve.ts
// turns this into SVG.
import { entrySizeCurves, formatAccessSpec, prepareCacheModel, type AccessPattern, type CacheCurve } from '../src/core/cachemodel';
import { formatShare, formatSize } from '../src/core/format';
import { accessOfPattern } from '../src/core/workload';

export interface ChartInput {
  virtualSize: bigint;
  clusterSize: bigint;
  extendedL2: boolean;
  /** The cache entry size in use: the cluster size (whole L2 tables) or a slice. */
  entrySize: bigint;
  /** The disk's declared access pattern, as the definition (or the mapping's assumption) says it. */
  pattern: string;
  requestSize: bigint;
  /** The L2 cache size the definition (or the what-if trial) sets; absent when unset. */
  configured?: bigint;
  /** The L2 cache the driver really keeps. */
  effective: bigint;
  /** The L2 cache that covers the whole disk with the entry size in use. */
  fullCoverage: bigint;
  points?: number;
  /** The curve measured on the disk's trace (the engine's points) and the cache it recommends. */
  measured?: { points: readonly { cacheBytes: bigint; hitRatio: number }[]; recommended: bigint };
}

/** The drawing area, in SVG user units. */
export const CHART = { width: 480, height: 210, left: 40, right: 14, top: 40, bottom: 26 } as const;

export type SeriesId = 'table' | 'slice' | 'measured';
export type MarkId = 'configured' | 'effective' | 'recommended' | 'full';

export interface ChartPoint {
  cacheBytes: bigint;
  hitRatio: number;
  x: number;
  y: number;
}

export interface ChartSeries {
  id: SeriesId;
  label: string;
  entrySize: bigint;
  /** True for the entry size the disk uses now. */
  inUse: boolean;
  fullCoverageBytes: bigint;
  points: ChartPoint[];
  /** SVG path: the model's points, then flat at 100 % from full coverage to the axis's end. */
  path: string;
}

export interface ChartMark {
  id: MarkId;
  label: string;
  bytes: bigint;
  x: number;
  /** Row of the label above the plot (0 nearest), so that labels of close marks do not overlap. */
  labelRow: number;
  /** How the label hangs from the mark: centred, or to one side near the chart's edges. */
  labelAnchor: 'start' | 'middle' | 'end';
  /** Hit ratio on the curve in use. */
  hitRatio: number;
  /** Hit ratio on each drawn curve. */
  ratios: Partial<Record<SeriesId, number>>;
}

export interface Tick {
  value: number;
  position: number;
  label: string;
}

export interface ChartModel {
  access: AccessPattern;
  accessText: string;
  /** Axis ends: powers of two around every curve point and mark. */
  minBytes: bigint;
  maxBytes: bigint;
  series: ChartSeries[];
  marks: ChartMark[];
  xTicks: Tick[];
  yTicks: Tick[];
  /** One sentence for assistive technology: what is drawn and the hit ratio at each mark. */
  summary: string;
}

export type ChartOutcome = { ok: true; chart: ChartModel } | { ok: false; reason: string };

const log2 = (bytes: bigint): number => {
  // Exact for powers of two of any size; bigint to number keeps ~16 digits otherwise, ample here.
  const bits = bytes.toString(2).length - 1;
  if (bits <= 52) return Math.log2(Number(bytes));
  return bits + Math.log2(Number(bytes >> BigInt(bits - 52)) / 2 ** 52);
};

const floorPow2 = (bytes: bigint): bigint => 1n << BigInt(bytes.toString(2).length - 1);
const ceilPow2 = (bytes: bigint): bigint => {
  const floor = floorPow2(bytes);
  return floor === bytes ? bytes : floor << 1n;
};

/** x of a size on the log axis between minBytes (plot's left edge) and maxBytes (right edge). */
export function xOf(bytes: bigint, minBytes: bigint, maxBytes: bigint): number {
  const left = CHART.left;
  const right = CHART.width - CHART.right;
  const span = log2(maxBytes) - log2(minBytes);
  if (span <= 0) return left;
  const share = (log2(bytes) - log2(minBytes)) / span;
  return left + Math.max(0, Math.min(1, share)) * (right - left);
}

/** y of a hit ratio: 0 at the plot's bottom edge, 1 at its top. */
export function yOf(hitRatio: number): number {
  const top = CHART.top;
  const bottom = CHART.height - CHART.bottom;
  return bottom - Math.max(0, Math.min(1, hitRatio)) * (bottom - top);
}

/** A hit ratio as the panel prints it: one decimal, rounded down, so only full coverage reads 100 %. */
export const hitRatioText = (hitRatio: number): string => formatShare(Math.min(1, hitRatio));

const round2 = (value: number): number => Math.round(value * 100) / 100;

function sizeTicks(minBytes: bigint, maxBytes: bigint): Tick[] {
  const low = Math.round(log2(minBytes));
  const high = Math.round(log2(maxBytes));
  // At most about seven labels; steps of whole octaves, preferring even ones so labels read 4 KiB, 16 KiB, ...
  const octaves = Math.max(1, high - low);
  let step = Math.max(1, Math.ceil(octaves / 6));
  if (step > 1 && step % 2 === 1) step++;
  const ticks: Tick[] = [];
  for (let bits = high; bits >= low; bits -= step) {
    const bytes = 1n << BigInt(bits);
    ticks.unshift({ value: bits, position: round2(xOf(bytes, minBytes, maxBytes)), label: formatSize(bytes) });
  }
  return ticks;
}

const RATIO_TICKS = [0, 0.25, 0.5, 0.75, 1];

/** The measured hit ratio at a size: the point at or below it (exact at the engine's points and marks; a cache never hits less with more room). */
export function measuredAt(points: readonly { cacheBytes: bigint; hitRatio: number }[], bytes: bigint): number {
  let ratio = 0;
  for (const p of points) if (p.cacheBytes <= bytes) ratio = Math.max(ratio, p.hitRatio);
  return ratio;
}

function seriesOf(id: SeriesId, curve: { points: readonly { cacheBytes: bigint; hitRatio: number }[]; entrySize: bigint; fullCoverageBytes: bigint }, inUse: boolean, minBytes: bigint, maxBytes: bigint): ChartSeries {
  const points = curve.points.map((p) => ({
    cacheBytes: p.cacheBytes,
    hitRatio: p.hitRatio,
    x: round2(xOf(p.cacheBytes, minBytes, maxBytes)),
    y: round2(yOf(p.hitRatio)),
  }));
  const steps = points.map((p, i) => `${i === 0 ? 'M' : 'L'}${p.x},${p.y}`);
  const last = points[points.length - 1];
  if (last && last.cacheBytes < maxBytes) steps.push(`L${round2(xOf(maxBytes, minBytes, maxBytes))},${last.y}`);
  const label = id === 'measured' ? `measured on the trace (${formatSize(curve.entrySize)} cache entries)`
    : id === 'table' ? `whole L2 tables (${formatSize(curve.entrySize)})` : `${formatSize(curve.entrySize)} cache entries`;
  return { id, label, entrySize: curve.entrySize, inUse, fullCoverageBytes: curve.fullCoverageBytes, points, path: steps.join(' ') };
}

/** Labels nearer than this (user units) to the one before in the same row move up a row. */
const LABEL_GAP = 8;
const labelWidth = (text: string): number => text.length * 5.6;

function placeLabels(marks: Omit<ChartMark, 'labelRow' | 'labelAnchor'>[]): ChartMark[] {
  const order = [...marks].sort((a, b) => a.x - b.x);
  const rowEnds: number[] = [];
  const placed = new Map<MarkId, { row: number; anchor: ChartMark['labelAnchor'] }>();
  for (const mark of order) {
    const width = labelWidth(mark.label);
    let anchor: ChartMark['labelAnchor'] = 'middle';
    let start = mark.x - width / 2;
    if (start < 2) { anchor = 'start'; start = mark.x; }
    else if (mark.x + width / 2 > CHART.width - 2) { anchor = 'end'; start = mark.x - width; }
    let row = rowEnds.findIndex((end) => start >= end + LABEL_GAP);
    if (row < 0) row = rowEnds.length;
    rowEnds[row] = start + width;
    placed.set(mark.id, { row, anchor });
  }
  return marks.map((mark) => ({ ...mark, labelRow: placed.get(mark.id)?.row ?? 0, labelAnchor: placed.get(mark.id)?.anchor ?? 'middle' }));
}

/**
 * The chart for one disk: the whole-table curve, the slice curve beside it (the slice in use, or
 * 4 KiB when the cluster is larger), and the configured, effective and full-coverage marks, each with
 * the model's hit ratio at exactly that size.
 */
export function chartModel(input: ChartInput): ChartOutcome {
  const access = accessOfPattern(input.pattern);
  if (!access.ok) return { ok: false, reason: access.error };
  const geometry = {
    virtualSize: input.virtualSize,
    clusterSize: input.clusterSize,
    extendedL2: input.extendedL2,
    access: access.value,
    ioSize: input.requestSize > 0n ? input.requestSize : undefined,
  };
  const curves = entrySizeCurves({ ...geometry, entrySize: input.entrySize }, { points: input.points });
  if (!curves.ok) return { ok: false, reason: curves.error.message };
  const drawn: Array<{ id: SeriesId; curve: CacheCurve }> = [{ id: 'table', curve: curves.value.wholeTable }];
  if (curves.value.slice) drawn.push({ id: 'slice', curve: curves.value.slice });
  const prepared: Array<{ id: SeriesId; at: (bytes: bigint) => number }> = [];
  for (const { id, curve } of drawn) {
    const model = prepareCacheModel({ ...geometry, entrySize: curve.entrySize });
    if (!model.ok) return { ok: false, reason: model.error.message };
    prepared.push({ id, at: (bytes) => model.value.at(bytes).hitRatio });
  }
  const inUseId: SeriesId = input.entrySize < input.clusterSize && curves.value.slice?.entrySize === input.entrySize ? 'slice' : 'table';

  const wanted: Array<{ id: MarkId; name: string; bytes: bigint }> = [];
  if (input.configured !== undefined && input.configured > 0n) wanted.push({ id: 'configured', name: 'configured', bytes: input.configured });
  if (input.effective > 0n) wanted.push({ id: 'effective', name: 'effective', bytes: input.effective });
  const measured = input.measured && input.measured.points.length > 0 ? input.measured : undefined;
  if (measured && measured.recommended > 0n) wanted.push({ id: 'recommended', name: 'measured target', bytes: measured.recommended });
  if (input.fullCoverage > 0n) wanted.push({ id: 'full', name: 'full coverage', bytes: input.fullCoverage });

  let lowest: bigint | undefined;
  let highest = 0n;
  const take = (bytes: bigint): void => {
    if (bytes <= 0n) return;
    if (lowest === undefined || bytes < lowest) lowest = bytes;
    if (bytes > highest) highest = bytes;
  };
  for (const { curve } of drawn) for (const p of curve.points) take(p.cacheBytes);
  for (const p of measured?.points ?? []) take(p.cacheBytes);
  for (const mark of wanted) take(mark.bytes);
  const minBytes = floorPow2(lowest ?? input.clusterSize);
  let maxBytes = ceilPow2(highest > 0n ? highest : input.clusterSize);
  if (maxBytes <= minBytes) maxBytes = minBytes * 2n;

  const series = drawn.map(({ id, curve }) => seriesOf(id, curve, id === inUseId, minBytes, maxBytes));
  if (measured) {
    const last = measured.points[measured.points.length - 1];
    series.push(seriesOf('measured', { points: measured.points, entrySize: input.entrySize, fullCoverageBytes: last?.cacheBytes ?? 0n }, false, minBytes, maxBytes));
  }
  const marks = placeLabels(wanted.map((mark) => {
    const ratios: Partial<Record<SeriesId, number>> = {};
    for (const { id, at } of prepared) ratios[id] = at(mark.bytes);
    if (measured) ratios.measured = measuredAt(measured.points, mark.bytes);
    return {
      id: mark.id,
      label: `${mark.name} ${formatSize(mark.bytes)}`,
      bytes: mark.bytes,
      x: round2(xOf(mark.bytes, minBytes, maxBytes)),
      hitRatio: ratios[inUseId] ?? 0,
      ratios,
    };
  }));

  const accessText = describeAccess(input.pattern, access.value);
  const inUse = series.find((s) => s.inUse);
  const summary = `Predicted L2 cache hit ratio against cache size (log scale) for ${accessText}, `
    + `${series.map((s) => s.label).join(' and ')}. `
    + (marks.length > 0 ? `On the ${inUse?.label ?? 'curve in use'}: ${marks.map((m) => `${m.label}: ${hitRatioText(m.hitRatio)}`).join('; ')}.` : '')
    + (measured ? ` Measured on the trace: ${marks.map((m) => `${m.label}: ${hitRatioText(m.ratios.measured ?? 0)}`).join('; ')}.` : '');
  return {
    ok: true,
    chart: {
      access: access.value,
      accessText,
      minBytes,
      maxBytes,
      series,
      marks,
      xTicks: sizeTicks(minBytes, maxBytes),
      yTicks: RATIO_TICKS.map((value) => ({ value, position: round2(yOf(value)), label: `${value * 100} %` })),
      summary,
    },
  };
}

function describeAccess(pattern: string, access: AccessPattern): string {
  const spec = formatAccessSpec(access);
  const written = pattern.trim();
  const model = `${spec} access`;
  return written.toLowerCase() === spec || written === spec ? model : `"${written}" read as ${model}`;
}
