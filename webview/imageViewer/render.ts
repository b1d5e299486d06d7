// Draws an ImageView: state and progress, the image's header facts, the allocation pictures, the
// backing chain and the recommended caches. Every number arrives from the host; this file only
// formats them (sizes through the engine's own formatSize).
import { formatSize } from '../../src/core/units';
import {
  ERROR_KIND_WORDS,
  type CacheChoiceView, type DrawnSummary, type ProfileChoice, type ImageView, type LayerView, type ThemeSummary, type WalkProgressView,
} from '../../src/protocol/image-viewer';
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

type Child = Node | string | null | undefined | false;

function el<K extends keyof HTMLElementTagNameMap>(tag: K, cls?: string, ...children: Child[]): HTMLElementTagNameMap[K] {
  const node = document.createElement(tag);
  if (cls) node.className = cls;
  for (const child of children) if (child !== null && child !== undefined && child !== false) node.append(child);
  return node;
}

const count = (n: number): string => n.toLocaleString('en-US');
const plural = (n: number, one: string, many = `${one}s`): string => `${count(n)} ${n === 1 ? one : many}`;
const bytes = (n: bigint): string => `${formatSize(n)}`;
const exactBytes = (n: bigint): string => `${formatSize(n)} (${n.toLocaleString('en-US')} bytes)`;
const yesNo = (value: boolean, yes: string, no = 'no'): string => (value ? yes : no);

function table(cls: string, rows: Array<[string, Child]>): HTMLTableElement {
  const t = el('table', cls);
  for (const [label, value] of rows) {
    const tr = el('tr', undefined, el('th', undefined, label), el('td', undefined, value));
    tr.querySelector('th')?.setAttribute('scope', 'row');
    t.appendChild(tr);
  }
  return t;
}

function flag(on: boolean, text: string, cls: string): HTMLElement {
  return el('span', on ? `flag ${cls}` : 'flag off', text);
}

function factRows(layer: LayerView, counting: boolean): Array<[string, Child]> {
  const f = layer.facts;
  if (!f) return [['format', layer.format]];
  const w = layer.walk;
  const pending = counting ? 'counting…' : 'not counted';
  const rows: Array<[string, Child]> = [
    ['format', `qcow2 version ${f.version}`],
    ['virtual size', exactBytes(f.virtualSize)],
    ['cluster size', bytes(f.clusterSize)],
    ['extended L2', f.extendedL2 && f.subclusterSize !== null ? `yes: 16-byte L2 entries, 32 subclusters of ${bytes(f.subclusterSize)}` : 'no: 8-byte L2 entries'],
    ['refcount width', `${f.refcountBits} bits`],
    ['flags', el('span', 'flags',
      flag(f.dirty, yesNo(f.dirty, 'dirty: refcounts may be stale', 'not dirty'), 'warn'), ' ',
      flag(f.corrupt, yesNo(f.corrupt, 'marked corrupt', 'not marked corrupt'), 'bad'), ' ',
      flag(f.externalDataFile !== null, f.externalDataFile !== null ? `data in an external file: ${f.externalDataFile}` : 'no external data file', 'info'))],
    ['encryption', f.encryption],
    ['compression type', f.compressionType],
    ['L1 entries', count(f.l1Entries)],
    ['L2 tables allocated', w ? count(w.l2TablesAllocated) : pending],
    ['data clusters', w
      ? `${count(w.dataClusters)} stored here: ${count(w.standardClusters)} standard, ${count(w.compressedClusters)} compressed`
      : pending],
    ['reads-as-zero clusters', w ? count(w.zeroClusters) : pending],
  ];
  if (f.extendedL2) {
    rows.push(['subclusters', w && w.subclustersAllocated !== null ? `${count(w.subclustersAllocated)} allocated, ${count(w.subclustersZero ?? 0)} read as zeros` : pending]);
  }
  rows.push(['stored in this layer', w ? exactBytes(w.allocatedBytes) : pending]);
  rows.push(['backing file', f.backing === null ? 'none' : `${f.backing}${f.backingFormat ? ` (format ${f.backingFormat})` : ''}`]);
  return rows;
}

function errorBlock(layer: LayerView): HTMLElement | null {
  if (!layer.error || layer.error.kind === 'cancelled') return null;
  const block = el('p', 'error', el('strong', undefined, `${ERROR_KIND_WORDS[layer.error.kind] ?? layer.error.kind}: `), layer.error.message);
  block.setAttribute('role', 'alert');
  return block;
}

function warnings(layer: LayerView): HTMLElement | null {
  if (!layer.walk || layer.walk.warnings.length === 0) return null;
  return el('ul', 'warnings', ...layer.walk.warnings.map((w) => el('li', undefined, w)));
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

function pictures(view: ImageView): { section: HTMLElement; regions: number } {
  const section = el('section', 'pictures', el('h2', undefined, 'Allocation map'));
  let regions = 0;
  for (const layer of view.layers) {
    if (!layer.facts) continue;
    const heading = el('h3', undefined, `${layerTitle(layer)}: ${layer.index === 0 ? view.fileName : layer.name ?? layer.path}`);
    if (layer.walk) {
      const picture = allocationPicture({
        regionBytes: layer.walk.allocation.regionBytes,
        data: layer.walk.allocation.data,
        zero: layer.walk.allocation.zero,
        virtualSize: layer.facts.virtualSize,
        label: layerTitle(layer),
      });
      regions += picture.regions;
      section.append(heading, picture.element);
    } else {
      section.append(heading, el('p', 'muted', view.state === 'reading' ? 'Drawn when the walk of this layer ends.' : 'Not walked.'));
    }
  }
  section.appendChild(pictureLegend());
  return { section, regions };
}

function chainSection(view: ImageView): HTMLElement {
  const section = el('section', 'chain', el('h2', undefined, 'Backing chain'));
  if (view.layers.length <= 1 && !view.layers[0]?.facts?.backing) {
    section.appendChild(el('p', 'muted', 'No backing file: unallocated clusters read as zeros.'));
    return section;
  }
  const list = el('ol', 'layers');
  for (const layer of view.layers) {
    const f = layer.facts;
    const summary = f
      ? `${layer.format} v${f.version}, ${bytes(f.virtualSize)} virtual, ${bytes(f.clusterSize)} clusters${f.extendedL2 ? ', extended L2' : ''}${layer.walk ? `, ${plural(layer.walk.l2TablesAllocated, 'L2 table')}, ${bytes(layer.walk.allocatedBytes)} stored` : ''}`
      : layer.format === 'qcow2' ? 'qcow2' : `${layer.format} file (no qcow2 metadata, no cache of its own)`;
    const item = el('li', layer.error && layer.error.kind !== 'cancelled' ? 'layer failed' : 'layer',
      el('div', 'layer-head', el('strong', undefined, layer.index === 0 ? 'image' : `backing ${layer.index}`), ' ',
        el('span', 'mono', layer.name ?? view.fileName)),
      el('div', 'muted mono', layer.path),
      el('div', undefined, summary),
      errorBlock(layer),
      warnings(layer));
    if (layer.index > 0 && f) {
      const details = el('details', undefined, el('summary', undefined, 'header facts'), table('facts', factRows(layer, view.state === 'reading')));
      item.appendChild(details);
    }
    list.appendChild(item);
  }
  section.appendChild(list);
  return section;
}

function choiceCell(choice: CacheChoiceView | undefined, pending: string): Child {
  if (!choice) return pending;
  return el('span', undefined,
    el('span', 'num', `L2 ${bytes(choice.l2)}`), el('span', 'muted', ` maps ${bytes(choice.l2Covered)}`), el('br'),
    el('span', 'num', `refcount ${bytes(choice.refcount)}`), el('span', 'muted', ` covers ${bytes(choice.refcountCovered)} of file`));
}

function totalCell(n: bigint): HTMLElement {
  return el('span', undefined, bytes(n), el('br'), el('span', 'muted', `${n.toLocaleString('en-US')} bytes`));
}

function cachesSection(view: ImageView, actions: ViewerActions): { section: HTMLElement; rows: number } {
  const section = el('section', 'caches', el('h2', undefined, 'Recommended cache settings'), profilePicker(view, actions));
  section.appendChild(el('p', 'muted',
    'Per layer: the L2 cache that holds every L2 table allocated now, the L2 cache that maps the whole virtual disk ' +
    '(what the image needs once fully allocated), and what the driver picks when nothing is set. ' +
    `Refcount caches are the driver's default. Assumed: ${view.profile}.`));
  const t = el('table', 'cache-table');
  const head = el('tr');
  for (const h of ['layer', 'now: every allocated table', 'fully allocated: full coverage', 'driver default']) head.appendChild(el('th', undefined, h));
  t.appendChild(el('thead', undefined, head));
  const body = el('tbody');
  let rows = 0;
  const pending = view.state === 'reading' ? 'counting…' : 'not counted';
  for (const layer of view.layers) {
    const c = layer.caches;
    const tr = el('tr');
    tr.appendChild(el('th', undefined, layer.index === 0 ? 'image' : `backing ${layer.index}`, el('br'), el('span', 'muted', layer.facts ? `${bytes(layer.facts.clusterSize)} clusters` : layer.format)));
    if (c) {
      tr.append(el('td', undefined, choiceCell(c.now, pending)), el('td', undefined, choiceCell(c.full, pending)), el('td', undefined, choiceCell(c.driverDefault, pending)));
    } else {
      const cell = el('td', 'muted', layer.error && layer.error.kind !== 'cancelled' ? 'not sized: the layer could not be read' : 'no qcow2 cache for this layer');
      cell.colSpan = 3;
      tr.appendChild(cell);
    }
    body.appendChild(tr);
    rows++;
  }
  const m = view.memory;
  if (m) {
    const tr = el('tr', 'total',
      el('th', undefined, 'memory over the chain', el('br'), el('span', 'muted', `sum of ${plural(m.layersSized, 'layer')}${m.layersSized < m.layersTotal ? ` of ${m.layersTotal}` : ''}`)),
      el('td', 'num', m.now === null ? pending : totalCell(m.now)),
      el('td', 'num', totalCell(m.full)),
      el('td', 'num', totalCell(m.driverDefault)));
    body.appendChild(tr);
    rows++;
  }
  t.appendChild(body);
  section.appendChild(t);
  section.appendChild(el('ul', 'cautions', ...view.cautions.map((c) => el('li', undefined, c))));
  return { section, rows };
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
  let regions = 0;
  let rows = 0;
  if (top) {
    const facts = el('section', 'facts-section', el('h2', undefined, 'Header'), table('facts', factRows(top, reading)));
    const topError = errorBlock(top);
    if (topError) facts.appendChild(topError);
    const topWarnings = warnings(top);
    if (topWarnings) facts.appendChild(topWarnings);
    parts.push(facts);
    if (top.facts) {
      const drawn = pictures(view);
      regions = drawn.regions;
      parts.push(drawn.section);
    }
    parts.push(chainSection(view));
    if (view.layers.some((l) => l.caches)) {
      const caches = cachesSection(view, actions);
      rows = caches.rows;
      parts.push(caches.section);
    }
  }
  root.replaceChildren(...parts);
  return { state: view.state, layers: view.layers.length, mapRegions: regions, cacheRows: rows, progressShown: reading, changedNotice: view.changedOnDisk !== null, theme: themeSummary(root) };
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
