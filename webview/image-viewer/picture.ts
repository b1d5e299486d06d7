// The allocation picture: one column per region of the virtual disk, left to right in guest order.
// A column fills from the baseline by the share this layer stores; the share that reads as zeros
// through a flag stacks above it in a second colour. Any share above zero gets at least a sliver,
// so one stored cluster in a large region still shows. Colours come from the theme (CSS classes).
import { formatShare, formatSize } from '../../src/core/format';

const SVG = 'http://www.w3.org/2000/svg';
const COLUMN = 6;
const GAP = 1;
const HEIGHT = 48;
const SLIVER = 3;

const percent = formatShare;

function rect(x: number, y: number, width: number, height: number, cls: string): SVGRectElement {
  const r = document.createElementNS(SVG, 'rect');
  r.setAttribute('x', String(x));
  r.setAttribute('y', String(y));
  r.setAttribute('width', String(width));
  r.setAttribute('height', String(height));
  r.setAttribute('class', cls);
  return r;
}

export interface PictureInput {
  regionBytes: bigint;
  data: readonly number[];
  zero: readonly number[];
  virtualSize: bigint;
  label: string;
}

/** Returns the picture and the number of regions drawn. */
export function allocationPicture(input: PictureInput): { element: HTMLElement; regions: number } {
  const { data, zero } = input;
  const figure = document.createElement('figure');
  figure.className = 'allocation';
  const svg = document.createElementNS(SVG, 'svg');
  const width = Math.max(1, data.length * (COLUMN + GAP) - GAP);
  svg.setAttribute('viewBox', `0 0 ${width} ${HEIGHT}`);
  svg.setAttribute('preserveAspectRatio', 'none');
  svg.setAttribute('role', 'img');
  svg.setAttribute('class', 'allocation-map');
  const stored = data.filter((s) => s > 0).length;
  const zeroed = zero.filter((s) => s > 0).length;
  svg.setAttribute('aria-label', `${input.label}: ${data.length} cells of ${formatSize(input.regionBytes)}; ${stored} hold data in this layer, ${zeroed} have clusters reading as zeros`);
  const title = document.createElementNS(SVG, 'title');
  title.textContent = `${input.label}: allocated share per cell`;
  svg.appendChild(title);

  data.forEach((share, i) => {
    const x = i * (COLUMN + GAP);
    const group = document.createElementNS(SVG, 'g');
    group.setAttribute('class', 'region');
    const tip = document.createElementNS(SVG, 'title');
    tip.textContent = `cell ${i + 1} of ${data.length} (${formatSize(input.regionBytes)} each): ${percent(share)} stored here, ${percent(zero[i] ?? 0)} reads as zeros`;
    group.appendChild(tip);
    group.appendChild(rect(x, 0, COLUMN, HEIGHT, 'cell'));
    const dataHeight = share > 0 ? Math.max(SLIVER, share * HEIGHT) : 0;
    if (dataHeight > 0) group.appendChild(rect(x, HEIGHT - dataHeight, COLUMN, dataHeight, 'data'));
    const zeroShare = zero[i] ?? 0;
    const zeroHeight = zeroShare > 0 ? Math.min(HEIGHT - dataHeight, Math.max(SLIVER, zeroShare * HEIGHT)) : 0;
    if (zeroHeight > 0) group.appendChild(rect(x, HEIGHT - dataHeight - zeroHeight, COLUMN, zeroHeight, 'zero'));
    svg.appendChild(group);
  });
  figure.appendChild(svg);

  const axis = document.createElement('div');
  axis.className = 'axis';
  const start = document.createElement('span');
  start.textContent = 'guest offset 0';
  const each = document.createElement('span');
  each.textContent = `${data.length} cells of ${formatSize(input.regionBytes)} each`;
  const end = document.createElement('span');
  end.textContent = formatSize(input.virtualSize);
  axis.append(start, each, end);
  figure.appendChild(axis);
  return { element: figure, regions: data.length };
}

export function pictureLegend(): HTMLElement {
  const legend = document.createElement('ul');
  legend.className = 'legend';
  const item = (cls: string, text: string): HTMLLIElement => {
    const li = document.createElement('li');
    const swatch = document.createElement('span');
    swatch.className = `swatch ${cls}`;
    li.append(swatch, document.createTextNode(text));
    return li;
  };
  legend.append(
    item('data', 'stored in this layer (standard, compressed or subclusters): column height is the region\'s share'),
    item('zero', 'reads as zeros through a zero flag'),
    item('cell', 'not allocated here: reads from the backing file, or zeros without one'),
  );
  const note = document.createElement('li');
  note.className = 'muted';
  note.textContent = 'Any share above zero shows at least a sliver; hover a column for its exact share.';
  legend.appendChild(note);
  return legend;
}
