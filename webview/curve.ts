// Draws the selected disk's hit-ratio chart from chartModel: SVG with classes only (the content
// security policy allows no inline style), coloured by the editor's theme in media/panel.css, with a
// text summary and a table of the marks for readers who cannot see the drawing.
import { formatSize } from '../src/core/format';
import { el, svg } from './dom';
import { CHART, chartModel, hitRatioText, yOf, type ChartInput, type ChartModel, type SeriesId } from './curve-model';

let figureCount = 0;

const MARK_NAMES = { configured: 'Configured', effective: 'Effective', recommended: 'Measured target', full: 'Full coverage' } as const;

function drawing(chart: ChartModel, titleId: string, tableId: string): SVGSVGElement {
  const left = CHART.left;
  const right = CHART.width - CHART.right;
  const top = CHART.top;
  const bottom = CHART.height - CHART.bottom;
  const root = svg('svg', {
    class: 'curve-chart',
    viewBox: `0 0 ${CHART.width} ${CHART.height}`,
    role: 'img',
    'aria-describedby': tableId,
    'aria-label': chart.summary,
  });
  root.append(svg('title', { id: titleId }, chart.summary));

  const grid = svg('g', { class: 'curve-grid', 'aria-hidden': 'true' });
  for (const tick of chart.yTicks) {
    grid.append(svg('line', { x1: left, x2: right, y1: tick.position, y2: tick.position }));
    grid.append(svg('text', { class: 'curve-tick', x: left - 4, y: tick.position + 3.5, 'text-anchor': 'end' }, tick.label));
  }
  for (const tick of chart.xTicks) {
    grid.append(svg('line', { x1: tick.position, x2: tick.position, y1: top, y2: bottom }));
    grid.append(svg('text', { class: 'curve-tick', x: tick.position, y: bottom + 13, 'text-anchor': 'middle' }, tick.label));
  }
  grid.append(svg('text', { class: 'curve-axis-title', x: right, y: CHART.height - 1, 'text-anchor': 'end' }, 'L2 cache size (log scale)'));
  root.append(grid);
  root.append(svg('rect', { class: 'curve-frame', x: left, y: top, width: right - left, height: bottom - top, 'aria-hidden': 'true' }));

  // The curve in use first (solid, wider), the other dashed over it: where the two coincide, as they
  // do under uniform access, both stay visible.
  const ordered = [...chart.series].sort((a, b) => Number(b.inUse) - Number(a.inUse));
  for (const series of ordered) {
    root.append(svg('path', {
      class: `curve-series series-${series.id}${series.inUse ? ' in-use' : ''}`,
      'data-series': series.id,
      'data-entry-size': series.entrySize.toString(),
      'data-full-coverage': series.fullCoverageBytes.toString(),
      'data-points': series.points.length,
      d: series.path,
    }));
  }

  for (const mark of chart.marks) {
    const group = svg('g', {
      class: `curve-mark mark-${mark.id}`,
      'data-mark': mark.id,
      'data-bytes': mark.bytes.toString(),
      'data-x': mark.x,
      'data-hit-ratio': mark.hitRatio,
    });
    group.append(svg('line', { x1: mark.x, x2: mark.x, y1: top, y2: bottom }));
    group.append(svg('circle', { cx: mark.x, cy: yOf(mark.hitRatio), r: 3 }));
    group.append(svg('text', { class: 'curve-mark-label', x: mark.x, y: top - 5 - mark.labelRow * 11, 'text-anchor': mark.labelAnchor }, mark.label));
    root.append(group);
  }
  return root;
}

function swatch(kind: string): SVGSVGElement {
  const icon = svg('svg', { class: `curve-swatch ${kind}`, viewBox: '0 0 24 8', 'aria-hidden': 'true' });
  icon.append(svg('line', { x1: 1, x2: 23, y1: 4, y2: 4 }));
  return icon;
}

function legend(chart: ChartModel): HTMLElement {
  const list = el('ul', 'curve-legend');
  for (const series of chart.series) {
    const item = el('li');
    item.dataset.series = series.id;
    item.append(swatch(`curve-series series-${series.id}${series.inUse ? ' in-use' : ''}`), el('span', undefined, `${series.label}${series.inUse ? ' — in use' : ''}`));
    list.append(item);
  }
  for (const mark of chart.marks) {
    const item = el('li');
    item.dataset.mark = mark.id;
    item.append(swatch(`curve-mark mark-${mark.id}`), el('span', undefined, MARK_NAMES[mark.id]));
    list.append(item);
  }
  return list;
}

function marksTable(chart: ChartModel, tableId: string): HTMLTableElement {
  const table = el('table', 'curve-marks');
  table.id = tableId;
  table.append(el('caption', undefined, `Predicted hit ratio at each mark (${chart.accessText})`));
  const head = el('thead');
  const headRow = el('tr');
  headRow.append(el('th', undefined, 'Mark'), el('th', undefined, 'L2 cache'));
  for (const series of chart.series) {
    const th = el('th', undefined, series.label);
    th.dataset.series = series.id;
    headRow.append(th);
  }
  head.append(headRow);
  const body = el('tbody');
  for (const mark of chart.marks) {
    const row = el('tr');
    row.dataset.mark = mark.id;
    const name = el('th', undefined, MARK_NAMES[mark.id]);
    name.scope = 'row';
    const size = el('td', 'curve-size', formatSize(mark.bytes));
    size.title = `${mark.bytes.toString()} bytes`;
    row.append(name, size);
    for (const series of chart.series) {
      const ratio = mark.ratios[series.id as SeriesId];
      const cell = el('td', `curve-ratio${series.inUse ? ' in-use' : ''}`, ratio === undefined ? '—' : hitRatioText(ratio));
      cell.dataset.series = series.id;
      if (ratio !== undefined) cell.dataset.hitRatio = String(ratio);
      row.append(cell);
    }
    body.append(row);
  }
  table.append(head, body);
  return table;
}

/**
 * The figure for one disk. The model is computed here, in the webview, each time the card is drawn,
 * so a what-if edit moves curves and marks at once; the time it took rides on data-compute-ms.
 */
export function curveFigure(diskName: string, input: ChartInput): HTMLElement {
  const figure = el('figure', 'curve');
  figure.dataset.disk = diskName;
  const started = performance.now();
  const outcome = chartModel(input);
  const computeMs = performance.now() - started;
  figure.dataset.computeMs = computeMs.toFixed(2);
  const title = el('figcaption', 'curve-title', `L2 cache hit ratio against cache size — ${diskName}`);
  figure.append(title);
  if (!outcome.ok) {
    figure.classList.add('curve-unavailable');
    figure.append(el('p', 'curve-note', `No curve: ${outcome.reason}`));
    return figure;
  }
  const { chart } = outcome;
  const id = ++figureCount;
  const titleId = `curve-title-${id}`;
  const tableId = `curve-marks-${id}`;
  figure.append(
    el('p', 'curve-note', `${chart.accessText[0]?.toUpperCase() ?? ''}${chart.accessText.slice(1)}, ${formatSize(input.requestSize)} requests over the whole disk; the top layer's cache (predicted steady state, for review).`
      + (input.measured ? ' The measured curve replays the disk\'s own trace through an LRU cache of every size; it shows only the period traced.' : '')),
    drawing(chart, titleId, tableId),
    legend(chart),
    marksTable(chart, tableId),
  );
  return figure;
}
