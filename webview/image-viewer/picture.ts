// The allocation picture: one column per region of the virtual disk, left to right in guest order.
// A column fills from the baseline by the share this layer stores; the share that reads as zeros
// through a flag stacks above it in a second colour. Any share above zero gets at least a sliver,
// so one stored cluster in a large region still shows. Colours come from the theme (CSS classes).
import { formatShare, formatSize } from '../../src/core/format';
import { el, svg } from '../dom';

const COLUMN = 6;
const GAP = 1;
const HEIGHT = 48;
const SLIVER = 3;

const percent = formatShare;

function rect(x: number, y: number, width: number, height: number, cls: string): SVGRectElement {
  return svg('rect', { x, y, width, height, class: cls });
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
  const width = Math.max(1, data.length * (COLUMN + GAP) - GAP);
  const stored = data.filter((s) => s > 0).length;
  const zeroed = zero.filter((s) => s > 0).length;
  const map = svg('svg', {
    viewBox: `0 0 ${width} ${HEIGHT}`,
    preserveAspectRatio: 'none',
    role: 'img',
    class: 'allocation-map',
    'aria-label': `${input.label}: ${data.length} cells of ${formatSize(input.regionBytes)}; ${stored} hold data in this layer, ${zeroed} have clusters reading as zeros`,
  });
  map.appendChild(svg('title', {}, `${input.label}: allocated share per cell`));

  data.forEach((share, i) => {
    const x = i * (COLUMN + GAP);
    const group = svg('g', { class: 'region' });
    group.appendChild(svg('title', {}, `cell ${i + 1} of ${data.length} (${formatSize(input.regionBytes)} each): ${percent(share)} stored here, ${percent(zero[i] ?? 0)} reads as zeros`));
    group.appendChild(rect(x, 0, COLUMN, HEIGHT, 'cell'));
    const dataHeight = share > 0 ? Math.max(SLIVER, share * HEIGHT) : 0;
    if (dataHeight > 0) group.appendChild(rect(x, HEIGHT - dataHeight, COLUMN, dataHeight, 'data'));
    const zeroShare = zero[i] ?? 0;
    const zeroHeight = zeroShare > 0 ? Math.min(HEIGHT - dataHeight, Math.max(SLIVER, zeroShare * HEIGHT)) : 0;
    if (zeroHeight > 0) group.appendChild(rect(x, HEIGHT - dataHeight - zeroHeight, COLUMN, zeroHeight, 'zero'));
    map.appendChild(group);
  });
  const axis = el('div', 'axis', el('span', undefined, 'guest offset 0'), el('span', undefined, `${data.length} cells of ${formatSize(input.regionBytes)} each`), el('span', undefined, formatSize(input.virtualSize)));
  const figure = el('figure', 'allocation', map, axis);
  return { element: figure, regions: data.length };
}

export function pictureLegend(): HTMLElement {
  const item = (cls: string, text: string): HTMLLIElement => el('li', undefined, el('span', `swatch ${cls}`), text);
  return el('ul', 'legend',
    item('data', 'stored in this layer (standard, compressed or subclusters): column height is the region\'s share'),
    item('zero', 'reads as zeros through a zero flag'),
    item('cell', 'not allocated here: reads from the backing file, or zeros without one'),
    el('li', 'muted', 'Any share above zero shows at least a sliver; hover a column for its exact share.'),
  );
}
