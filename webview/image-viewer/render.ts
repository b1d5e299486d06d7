// Draws an ImageView: state and progress, then the groups `cachewright inspect` prints (layout,
// allocation, caches, chain) with the same labels and wording (src/protocol/image-groups.ts), the
// allocation map drawn as a picture. Every number arrives from the host; this file only lays it out.
import { formatCount, formatCounted } from '../../src/core/format';
import { chainRows, GROUP_TITLES, layerGroups, type CostGroup, type CostRow } from '../../src/protocol/image-groups';
import {
  ERROR_KIND_WORDS,
  type DrawnSummary, type ProfileChoice, type ImageView, type LayerView, type ThemeSummary, type WalkProgressView,
} from '../../src/protocol/image-viewer';
import { el, type Child } from '../dom';
import { allocationPicture, pictureLegend } from './picture';

export interface ViewerActions {
  stop(): void;
  reread(): void;
  profile(choice: ProfileChoice): void;
}

const PROFILES: Array<{ label: string; choice: ProfileChoice }> = [
  { label: 'current driver, Linux host', choice: { generation: 'current', platform: 'linux' } },
  { label: 'current driver, other hosts', choice: { generation: 'current', platform: 'other' } },
  { label: 'legacy driver', choice: { generation: 'legacy', platform: 'linux' } },
];

function profilePicker(view: ImageView, actions: ViewerActions): HTMLElement {
  const select = el('select', 'profile-picker');
  select.id = 'profile-picker';
  PROFILES.forEach((p, i) => {
    const option = el('option', undefined, p.label);
    option.value = String(i);
    const current = view.profileChoice;
    option.selected = p.choice.generation === current.generation && (p.choice.generation === 'legacy' || p.choice.platform === current.platform);
    select.appendChild(option);
  });
  select.addEventListener('change', () => {
    const picked = PROFILES[Number(select.value)];
    if (picked) actions.profile(picked.choice);
  });
  const label = el('label', undefined, 'Driver defaults: ');
  label.htmlFor = select.id;
  return el('div', 'profile-row', label, select);
}

const count = formatCount;
const plural = formatCounted;

function table(cls: string, rows: Array<[string, Child]>): HTMLTableElement {
  const t = el('table', cls);
  for (const [label, value] of rows) {
    const tr = el('tr', undefined, el('th', undefined, label), el('td', undefined, value));
    tr.querySelector('th')?.setAttribute('scope', 'row');
    t.appendChild(tr);
  }
  return t;
}

interface Drawn {
  regions: number;
  cacheRows: number;
}

/** One group's rows as a table; the allocation map's row gets its picture under the sentence. */
function groupTable(rows: CostRow[], layer: LayerView, drawn: Drawn): HTMLTableElement {
  return table('facts', rows.map((row): [string, Child] => {
    if (!row.map || !layer.cost) return [row.label, row.value];
    const picture = allocationPicture({
      regionBytes: row.map.cellBytes,
      data: row.map.data,
      zero: row.map.zero,
      virtualSize: layer.cost.layout.virtualSize,
      label: layerTitle(layer),
    });
    drawn.regions += picture.regions;
    return [row.label, el('div', undefined, row.value, picture.element)];
  }));
}

function groupsOf(layer: LayerView, view: ImageView): CostGroup[] {
  if (!layer.cost || !layer.notes) return [];
  const pending = view.state === 'reading' && !layer.walked ? 'counting…' : 'not counted';
  return layerGroups(layer.cost, layer.notes, { pending, profile: view.profile });
}

function groupSections(layer: LayerView, view: ImageView, drawn: Drawn, heading: 'h2' | 'h4'): HTMLElement[] {
  return groupsOf(layer, view).map((group) => {
    if (group.name === 'caches') drawn.cacheRows += group.rows.length;
    return el('section', `group group-${group.name}`, el(heading, undefined, GROUP_TITLES[group.name]), groupTable(group.rows, layer, drawn));
  });
}

function errorBlock(layer: LayerView): HTMLElement | null {
  if (!layer.error || layer.error.kind === 'cancelled') return null;
  const block = el('p', 'error', el('strong', undefined, `${ERROR_KIND_WORDS[layer.error.kind] ?? layer.error.kind}: `), layer.error.message);
  block.setAttribute('role', 'alert');
  return block;
}

function warnings(layer: LayerView): HTMLElement | null {
  if (layer.warnings.length === 0) return null;
  return el('ul', 'warnings', ...layer.warnings.map((w) => el('li', undefined, w)));
}

function progressBlock(progress: WalkProgressView | null, actions: ViewerActions): HTMLElement {
  const bar = el('progress', 'walk');
  bar.max = Math.max(1, progress?.l1Total ?? 1);
  if (progress) bar.value = progress.l1Done;
  else bar.removeAttribute('value');
  const text = el('span', 'progress-text', progressText(progress));
  const stop = el('button', 'secondary', 'Stop');
  stop.type = 'button';
  stop.addEventListener('click', () => actions.stop());
  const block = el('div', 'progress', bar, text, stop);
  block.id = 'progress';
  return block;
}

export function progressText(progress: WalkProgressView | null): string {
  if (!progress) return 'Opening the tables…';
  const layer = progress.layer === 0 ? 'the image' : `backing layer ${progress.layer}`;
  return `${layer}: ${count(progress.l1Done)} of ${plural(progress.l1Total, 'L1 entry', 'L1 entries')} looked at, ${plural(progress.l2TablesRead, 'L2 table')} read`;
}

/** Updates the progress line in place (no redraw), while the walk runs. */
export function updateProgress(root: HTMLElement, progress: WalkProgressView): boolean {
  const bar = root.querySelector<HTMLProgressElement>('progress.walk');
  const text = root.querySelector<HTMLElement>('.progress-text');
  if (!bar || !text) return false;
  bar.max = Math.max(1, progress.l1Total);
  bar.value = progress.l1Done;
  text.textContent = progressText(progress);
  return true;
}

function layerTitle(layer: LayerView): string {
  if (layer.index === 0) return 'the image';
  return `backing layer ${layer.index}`;
}

function chainSection(view: ImageView, drawn: Drawn): HTMLElement {
  const section = el('section', 'group group-chain', el('h2', undefined, GROUP_TITLES.chain));
  const backing = view.layers.slice(1);
  if (backing.length === 0 && !view.layers[0]?.notes?.backing) {
    section.appendChild(el('p', 'muted', 'No backing file: unallocated clusters read as zeros.'));
    return section;
  }
  const list = el('ol', 'layers');
  for (const layer of backing) {
    const item = el('li', layer.error && layer.error.kind !== 'cancelled' ? 'layer failed' : 'layer',
      el('h3', 'layer-head', `backing ${layer.index}: `, el('span', 'mono', layer.name ?? layer.path)),
      el('div', 'muted mono', layer.path),
      layer.cost ? null : el('div', undefined, layer.format === 'qcow2' ? 'qcow2' : `${layer.format} file: no qcow2 metadata, no cache of its own`),
      errorBlock(layer),
      warnings(layer),
      ...groupSections(layer, view, drawn, 'h4'));
    list.appendChild(item);
  }
  section.appendChild(list);
  if (view.chain) {
    const rows = chainRows(view.chain, { pending: view.state === 'reading' ? 'counting…' : 'not counted' });
    drawn.cacheRows += rows.length;
    section.append(el('h3', undefined, 'over the chain'), table('facts chain-sum', rows.map((r): [string, Child] => [r.label, r.value])));
  }
  return section;
}

export function renderView(root: HTMLElement, view: ImageView, actions: ViewerActions): DrawnSummary {
  const top = view.layers[0];
  const state = el('p', `state ${view.state}`, view.status);
  state.setAttribute('role', 'status');
  const head = el('header', 'head', el('h1', undefined, view.fileName), el('div', 'muted mono', view.path), state);
  const reading = view.state === 'reading';
  if (view.changedOnDisk) {
    const notice = el('p', 'changed', view.changedOnDisk === 'deleted'
      ? 'The file was deleted or moved after it was read: these numbers describe what it was.'
      : 'The file changed on disk after it was read: the numbers below may be stale. Read again for fresh ones.');
    notice.setAttribute('role', 'alert');
    head.appendChild(notice);
  }
  if (reading) head.appendChild(progressBlock(view.progress, actions));
  else if (view.state !== 'untrusted') {
    const again = el('button', 'secondary', 'Read again');
    again.type = 'button';
    again.addEventListener('click', () => actions.reread());
    head.appendChild(el('div', 'actions', again));
  }
  const parts: HTMLElement[] = [head];
  const drawn: Drawn = { regions: 0, cacheRows: 0 };
  if (top) {
    const topError = errorBlock(top);
    const topWarnings = warnings(top);
    if (topError || topWarnings || !top.cost) {
      parts.push(el('section', 'image-notes', topError, topWarnings, top.cost ? null : el('p', undefined, `format: ${top.format}`)));
    }
    const groups = groupSections(top, view, drawn, 'h2');
    const caches = groups.find((g) => g.classList.contains('group-caches'));
    if (caches) {
      caches.insertBefore(profilePicker(view, actions), caches.children[1] ?? null);
      caches.appendChild(el('ul', 'cautions', ...view.cautions.map((c) => el('li', undefined, c))));
    }
    parts.push(...groups);
    if (top.cost) parts.push(chainSection(view, drawn));
    if (drawn.regions > 0) parts.push(el('section', 'map-legend', pictureLegend()));
  }
  root.replaceChildren(...parts);
  return { state: view.state, layers: view.layers.length, mapRegions: drawn.regions, cacheRows: drawn.cacheRows, progressShown: reading, changedNotice: view.changedOnDisk !== null, theme: themeSummary(root) };
}

/** What the theme's variables resolve to here, so a test can see the viewer follow the theme. */
export function themeSummary(root: HTMLElement): ThemeSummary {
  const kinds = ['vscode-high-contrast-light', 'vscode-high-contrast', 'vscode-dark', 'vscode-light'];
  const kind = kinds.find((k) => document.body.classList.contains(k)) ?? 'unknown';
  const data = root.querySelector('svg.allocation-map .data');
  const cell = root.querySelector('svg.allocation-map .cell');
  return {
    kind,
    background: getComputedStyle(document.body).backgroundColor,
    dataFill: data ? getComputedStyle(data).fill : '',
    cellStroke: cell ? getComputedStyle(cell).stroke : '',
  };
}
