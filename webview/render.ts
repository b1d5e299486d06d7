// Builds the sizing panel's DOM from a PanelView. Text goes in through textContent only, drawings are
// SVG attributes (no inline styles: the content security policy allows none).
import type { SizingReport } from '../src/core/results';
import { formatSizeExact, parseSize } from '../src/core/units';
import { formatCount, formatInterval, formatPercent, formatShare, formatSize } from '../src/core/format';
import type { DiskView, FindingView, HostView, MachineView, MeasuredView, PanelView, WhatIfValues } from '../src/protocol/panel';
import { curveFigure } from './curve';
import { custom, el, svg } from './dom';
import { CLUSTER_CHOICES, sliceChoices, whatIf, type WhatIfResult } from './whatif';

export interface PanelActions {
  /** Shows a place in the panel's file, or in the definition `uri` names (a machine on a shared host). */
  reveal(target: { range: FindingView['range']; uri?: string }): void;
  apply(disk: DiskView, values: WhatIfValues): void;
  /** The what-if state changed: redraw. */
  changed(): void;
  /** The user picked this disk (its name or its what-if button): its card carries the curve. */
  select(pointer: string): void;
}

/** Trial values per disk pointer; kept across updates so typing in the editor does not reset them. */
export type WhatIfState = Map<string, WhatIfValues>;

/** A horizontal bar: `share` of the track filled (0..1), drawn in SVG so it needs no style attribute. */
function bar(share: number, kind: 'coverage' | 'budget', over = false): SVGSVGElement {
  const drawing = svg('svg', { class: `bar bar-${kind}${over ? ' bar-over' : ''}`, viewBox: '0 0 100 6', preserveAspectRatio: 'none', role: 'img' });
  drawing.append(
    svg('rect', { class: 'bar-track', width: 100, height: 6 }),
    svg('rect', { class: 'bar-fill', width: Math.max(0, Math.min(1, share)) * 100, height: 6 }),
  );
  return drawing;
}

/** Percent with one decimal, rounded down so that a cache short of full coverage never shows 100 %. */
export function percent(part: bigint, whole: bigint): string {
  return whole === 0n ? '—' : formatPercent(part, whole);
}

const ratio = (part: bigint, whole: bigint): number => (whole === 0n ? 0 : Number((part * 10000n) / whole) / 10000);

interface Row {
  field: string;
  label: string;
  value: bigint | number | string;
  was?: bigint | number | string;
  kind: 'size' | 'count' | 'text';
  extra?: Node;
  hint?: string;
}

function valueText(row: Pick<Row, 'kind'>, value: bigint | number | string): string {
  if (row.kind === 'size' && typeof value === 'bigint') return formatSize(value);
  if (row.kind === 'count' && typeof value !== 'string') return formatCount(value);
  return String(value);
}

function numbersTable(rows: Row[]): HTMLElement {
  const table = el('table', 'numbers');
  const body = el('tbody');
  for (const row of rows) {
    const tr = el('tr');
    tr.dataset.field = row.field;
    const th = el('th', undefined, row.label);
    th.scope = 'row';
    if (row.hint) th.title = row.hint;
    const td = el('td', 'value');
    td.dataset.field = row.field;
    if (typeof row.value === 'bigint' || typeof row.value === 'number') td.dataset.value = row.value.toString();
    const main = el('span', 'num', valueText(row, row.value));
    if (typeof row.value === 'bigint') main.title = `${row.value.toString()} bytes`;
    td.append(main);
    if (row.was !== undefined && row.was !== row.value) {
      td.classList.add('changed');
      td.append(el('span', 'was', `was ${valueText(row, row.was)}`));
    }
    if (row.extra) td.append(row.extra);
    tr.append(th, td);
    body.append(tr);
  }
  table.append(body);
  return table;
}

function findingList(findings: FindingView[], actions: PanelActions): HTMLElement {
  const list = el('ul', 'findings');
  for (const finding of findings) {
    const item = el('li', `finding severity-${finding.severity}${finding.accepted ? ' accepted' : ''}`);
    item.dataset.rule = finding.rule;
    // Plain elements rather than the toolkit's tag/badge, whose templates write style attributes
    // that the panel's content security policy refuses.
    const tag = el('span', 'rule', finding.rule);
    const message = el('button', 'finding-message', finding.message);
    message.type = 'button';
    message.title = `${finding.severity} at line ${finding.range.line}, column ${finding.range.column}${finding.fixTitle ? ` — fix: ${finding.fixTitle}` : ''}`;
    message.addEventListener('click', () => actions.reveal(finding));
    item.append(el('span', 'severity', finding.severity), tag, message);
    if (finding.accepted) item.append(el('span', 'accepted-reason', `accepted: ${finding.accepted}`));
    list.append(item);
  }
  return list;
}

function diskRows(disk: DiskView, sizing: SizingReport, entrySize: bigint, was?: { sizing: SizingReport; entrySize: bigint }, configuredL2?: bigint, wasConfiguredL2?: bigint): Row[] {
  const covered = ratio(sizing.l2CoveredBytes, sizing.virtualSize);
  const coverage = el('div', 'coverage');
  coverage.append(bar(covered, 'coverage', covered < 1), el('span', 'coverage-of', `${formatSize(sizing.l2CoveredBytes)} of ${formatSize(sizing.virtualSize)}`));
  const wholeTable = entrySize === sizing.clusterSize;
  const combined = disk.configured.combinedCache;
  const l2Text = (value: bigint | undefined): string | bigint =>
    value ?? (combined !== undefined ? `not set: taken from the ${formatSize(combined)} combined cache` : 'not set: the driver\'s default');
  return [
    { field: 'virtualSize', label: 'Virtual size', value: sizing.virtualSize, kind: 'size' },
    { field: 'clusterSize', label: 'Cluster size', value: sizing.clusterSize, was: was?.sizing.clusterSize, kind: 'size' },
    { field: 'l2EntryBytes', label: 'L2 entry', value: `${sizing.l2EntryBytes} B${disk.extendedL2 ? ' (extended L2)' : ''}`, kind: 'text' },
    { field: 'entrySize', label: 'Cache entry size', value: `${formatSize(entrySize)}${wholeTable ? ' (a whole L2 table)' : ' (part of an L2 table)'}`, was: was && was.entrySize !== entrySize ? `${formatSize(was.entrySize)}` : undefined, kind: 'text' },
    { field: 'l2FullCoverage', label: 'L2 cache for full coverage', value: sizing.l2FullCoverage, was: was?.sizing.l2FullCoverage, kind: 'size', hint: 'One 8-byte (16 with extended L2) entry per cluster of the virtual disk, in whole cache entries' },
    { field: 'l2Configured', label: 'Configured L2 cache', value: l2Text(configuredL2), was: wasConfiguredL2 !== configuredL2 ? l2Text(wasConfiguredL2) : undefined, kind: configuredL2 === undefined ? 'text' : 'size' },
    { field: 'l2Effective', label: 'Effective L2 cache', value: sizing.l2Effective, was: was?.sizing.l2Effective, kind: 'size', hint: 'What the driver really uses: configured, else its default, never above full coverage' },
    { field: 'coverage', label: 'Share of the disk the cache maps', value: percent(sizing.l2CoveredBytes, sizing.virtualSize), was: was ? percent(was.sizing.l2CoveredBytes, was.sizing.virtualSize) : undefined, kind: 'text', extra: coverage },
    { field: 'refcountEffective', label: 'Refcount cache', value: sizing.refcountEffective, was: was?.sizing.refcountEffective, kind: 'size' },
    { field: 'layers', label: 'Layers (with backing files)', value: sizing.layers, kind: 'count' },
    { field: 'cacheMemoryTotal', label: 'Cache memory, all layers', value: sizing.cacheMemoryTotal, was: was?.sizing.cacheMemoryTotal, kind: 'size' },
  ];
}

/** What the disk's trace says, as the linter measured it for the definition's values. */
function measuredSection(measured: MeasuredView): HTMLElement {
  const section = el('section', 'measured');
  section.append(el('h3', 'measured-title', `Measured on ${measured.traces.join(', ')}`));
  const sampling = measured.sampleRate < 1 ? `sampled: ${formatShare(measured.sampleRate, 2)} of the cache entries, figures estimated` : 'exact: every lookup counted';
  const target = formatShare(measured.targetHitRatio);
  const rows: Row[] = [
    { field: 'measuredRequests', label: 'Requests traced', value: measured.requests, kind: 'count' },
    { field: 'measuredSpan', label: 'Span of the disk traced', value: `${formatSize(measured.span.start)} to ${formatSize(measured.span.end)}`, kind: 'text', hint: 'From the lowest offset to the highest end of the requests looked up' },
    { field: 'measuredSampling', label: 'Sampling', value: sampling, kind: 'text' },
    { field: 'measuredHitRatio', label: 'Hit ratio of the effective cache', value: formatShare(measured.hitRatio), kind: 'text' },
    { field: 'measuredWorkingSet', label: 'Working set (cache entries touched)', value: measured.workingSet, kind: 'size' },
    {
      field: 'measuredRecommended',
      label: measured.targetReached ? `Smallest cache reaching ${target}` : `No cache reaches ${target}; the working set`,
      value: measured.recommendedL2Cache,
      kind: 'size',
    },
  ];
  section.append(numbersTable(rows));
  return section;
}

function option(value: string, label: string, selected: boolean): HTMLElement {
  const node = custom('vscode-option', { value }, label);
  if (selected) node.setAttribute('selected', '');
  return node;
}

function whatIfControls(disk: DiskView, values: WhatIfValues, result: WhatIfResult, state: WhatIfState, actions: PanelActions): HTMLElement {
  const box = el('div', 'whatif');
  const top = disk.chain[0];
  const cluster = values.clusterSize ?? top?.geometry.clusterSize ?? disk.sizing.clusterSize;
  const update = (next: WhatIfValues): void => { state.set(disk.pointer, next); actions.changed(); };

  const clusterPick = custom('vscode-dropdown', { 'data-control': 'clusterSize', 'aria-label': 'Cluster size' });
  for (const choice of CLUSTER_CHOICES) clusterPick.append(option(choice.toString(), formatSize(choice), choice === cluster));
  clusterPick.addEventListener('change', () => {
    const picked = BigInt((clusterPick as HTMLSelectElement).value);
    const next: WhatIfValues = { ...values, clusterSize: picked };
    if (next.cacheEntrySize !== undefined && next.cacheEntrySize > picked) next.cacheEntrySize = picked;
    update(next);
  });

  const currentSlice = 'cacheEntrySize' in values ? values.cacheEntrySize : top?.settings.entrySize;
  const slicePick = custom('vscode-dropdown', { 'data-control': 'cacheEntrySize', 'aria-label': 'Cache entry size' });
  slicePick.append(option('table', 'whole L2 table', currentSlice === undefined));
  for (const choice of sliceChoices(cluster)) slicePick.append(option(choice.toString(), formatSize(choice), choice === currentSlice));
  slicePick.addEventListener('change', () => {
    const raw = (slicePick as HTMLSelectElement).value;
    update({ ...values, cacheEntrySize: raw === 'table' ? undefined : BigInt(raw) });
  });

  const l2Shown = values.l2Cache ?? disk.configured.l2Cache;
  const l2Field = custom('vscode-text-field', { 'data-control': 'l2Cache', placeholder: 'e.g. 2560K', value: l2Shown !== undefined ? formatSizeExact(l2Shown) : '' }, 'L2 cache');
  const l2Error = el('span', 'field-error');
  const readL2 = (): void => {
    const text = ((l2Field as HTMLInputElement).value ?? '').trim();
    if (text === '') { const next = { ...values }; delete next.l2Cache; update(next); return; }
    const parsed = parseSize(text);
    if (!parsed.ok) { l2Error.textContent = parsed.error; return; }
    update({ ...values, l2Cache: parsed.value });
  };
  l2Field.addEventListener('change', readL2);
  l2Field.addEventListener('keydown', (event) => { if ((event as KeyboardEvent).key === 'Enter') readL2(); });

  const fullButton = custom('vscode-button', { appearance: 'secondary', 'data-action': 'full-coverage' }, 'Use full coverage');
  fullButton.addEventListener('click', () => update({ ...values, l2Cache: result.recommended.l2Cache }));

  const labelled = (label: string, control: HTMLElement): HTMLElement => {
    const wrap = el('label', 'control');
    wrap.append(el('span', 'control-label', label), control);
    return wrap;
  };
  const controls = el('div', 'controls');
  controls.append(labelled('Cluster size', clusterPick), labelled('Cache entry size', slicePick), l2Field, fullButton);
  box.append(controls, l2Error);
  for (const problem of result.problems) box.append(el('p', 'problem', problem));

  const actionsRow = el('div', 'actions');
  const changedValues = pendingValues(disk, values);
  const apply = custom('vscode-button', { 'data-action': 'apply' }, 'Apply to the definition');
  if (Object.keys(changedValues).length === 0 || result.problems.length > 0) apply.setAttribute('disabled', '');
  apply.addEventListener('click', () => actions.apply(disk, changedValues));
  const reset = custom('vscode-button', { appearance: 'secondary', 'data-action': 'reset' }, 'Reset');
  reset.addEventListener('click', () => { state.set(disk.pointer, {}); actions.changed(); });
  actionsRow.append(apply, reset);
  box.append(actionsRow);
  if (changedValues.clusterSize !== undefined) {
    box.append(el('p', 'caution', 'The cluster size is fixed when an image is created: the definition can say it, but the image must be converted into a new file to match. Back up first and verify the copy.'));
  }
  return box;
}

/** The trial values that differ from what the definition already says. */
export function pendingValues(disk: DiskView, values: WhatIfValues): WhatIfValues {
  const top = disk.chain[0];
  const out: WhatIfValues = {};
  if (values.clusterSize !== undefined && values.clusterSize !== top?.geometry.clusterSize) out.clusterSize = values.clusterSize;
  if (values.l2Cache !== undefined && values.l2Cache !== disk.configured.l2Cache) out.l2Cache = values.l2Cache;
  if ('cacheEntrySize' in values && values.cacheEntrySize !== disk.configured.cacheEntrySize && values.cacheEntrySize !== undefined) out.cacheEntrySize = values.cacheEntrySize;
  return out;
}

interface DiskOutcome { card: HTMLElement; total: bigint }

function diskCard(view: PanelView, disk: DiskView, state: WhatIfState, actions: PanelActions, charted: boolean): DiskOutcome {
  const card = el('article', charted ? 'disk selected' : 'disk');
  card.dataset.pointer = disk.pointer;
  card.dataset.disk = disk.name;
  const head = el('header', 'disk-head');
  const title = custom('vscode-link', { class: 'disk-name', title: 'Show this disk in the editor', href: '#' }, disk.name);
  title.addEventListener('click', (event) => {
    event.preventDefault();
    actions.reveal(disk);
    actions.select(disk.pointer);
    actions.changed();
  });
  head.append(title);
  const active = disk.findings.filter((f) => !f.accepted);
  if (active.length > 0) {
    const count = el('span', 'finding-count', String(active.length));
    count.title = `${active.length} finding${active.length > 1 ? 's' : ''}`;
    head.append(count);
  }
  const toggle = custom('vscode-button', { appearance: 'icon', class: 'whatif-toggle', 'data-action': 'whatif', title: 'Try other values' }, 'What if…');
  const open = state.has(disk.pointer);
  toggle.addEventListener('click', () => {
    if (state.has(disk.pointer)) state.delete(disk.pointer); else state.set(disk.pointer, {});
    actions.select(disk.pointer);
    actions.changed();
  });
  head.append(toggle);
  card.append(head);

  let sizing = disk.sizing;
  let entrySize = disk.entrySize;
  let configuredL2 = disk.configured.l2Cache;
  let result: WhatIfResult | undefined;
  const values = state.get(disk.pointer);
  if (values) {
    result = whatIf(disk, view.profile, values);
    if (result.problems.length === 0) {
      sizing = result.sizing;
      entrySize = result.entrySize;
      if (values.l2Cache !== undefined) configuredL2 = values.l2Cache;
    }
    card.classList.add('trying');
  }
  const was = values && result && result.problems.length === 0 ? { sizing: disk.sizing, entrySize: disk.entrySize } : undefined;
  card.append(numbersTable(diskRows(disk, sizing, entrySize, was, configuredL2, disk.configured.l2Cache)));
  const cleanup = disk.configured.cleanupInterval;
  card.append(el('p', 'cleanup', `Cleanup interval: ${cleanup === undefined ? `driver default` : formatInterval(cleanup)}; recommended L2 cache ${formatSize(disk.recommended.l2Cache)}`));
  const measured = disk.measured;
  if (measured) card.append(measuredSection(measured));
  if (charted) {
    // The measured curve holds for the geometry it was measured with; a trial with another cluster
    // or cache entry size is drawn from the model alone.
    const sameGeometry = measured !== undefined && measured.clusterSize === sizing.clusterSize && measured.entrySize === entrySize;
    // The trial's numbers when it is valid, so the marks move with every what-if edit.
    card.append(curveFigure(disk.name, {
      virtualSize: sizing.virtualSize,
      clusterSize: sizing.clusterSize,
      extendedL2: disk.extendedL2,
      entrySize,
      pattern: disk.workload.pattern,
      requestSize: disk.workload.requestSize,
      configured: configuredL2,
      effective: sizing.l2Effective,
      fullCoverage: sizing.l2FullCoverage,
      ...(measured && sameGeometry ? { measured: { points: measured.points, recommended: measured.recommendedL2Cache } } : {}),
    }));
    if (measured && !sameGeometry) card.append(el('p', 'curve-note', 'The measured curve is not drawn for this trial: it was measured with the definition\'s cluster and cache entry size.'));
  }
  if (open && values && result) card.append(whatIfControls(disk, values, result, state, actions));
  if (disk.findings.length > 0) card.append(findingList(disk.findings, actions));
  return { card, total: sizing.cacheMemoryTotal };
}

function machineSection(view: PanelView, machine: MachineView, state: WhatIfState, actions: PanelActions, charted: string | undefined): HTMLElement {
  const section = el('section', 'machine');
  section.dataset.machine = machine.name;
  const head = el('header', 'machine-head');
  const name = custom('vscode-link', { class: 'machine-name', href: '#', title: 'Show this machine in the editor' }, machine.name);
  name.addEventListener('click', (event) => { event.preventDefault(); actions.reveal(machine); });
  const h2 = el('h2');
  h2.append(name);
  head.append(h2);
  if (machine.memory !== undefined) head.append(el('span', 'memory', `${formatSize(machine.memory)} RAM`));
  section.append(head);

  const cards = machine.disks.map((disk) => diskCard(view, disk, state, actions, disk.pointer === charted));
  const total = cards.reduce((sum, c) => sum + c.total, 0n);
  const budgetLine = el('div', 'budget');
  budgetLine.dataset.field = 'machineCacheTotal';
  budgetLine.dataset.value = total.toString();
  const summary = el('span', 'budget-text');
  if (machine.budget !== undefined) {
    const over = total > machine.budget;
    summary.textContent = `Cache memory ${formatSize(total)} of a ${formatSize(machine.budget)} budget (${percent(total, machine.budget)})`;
    budgetLine.append(summary, bar(ratio(total, machine.budget), 'budget', over));
    if (over) budgetLine.classList.add('over');
  } else {
    summary.textContent = `Cache memory ${formatSize(total)} (no memory known, so no budget)`;
    budgetLine.append(summary);
  }
  if (total !== machine.cacheMemoryTotal) budgetLine.append(el('span', 'was', `was ${formatSize(machine.cacheMemoryTotal)}`));
  section.append(budgetLine);
  if (machine.findings.length > 0) section.append(findingList(machine.findings, actions));
  for (const { card } of cards) section.append(card);
  if (machine.disks.length === 0) section.append(el('p', 'none', 'No qcow2 disk found for this machine.'));
  return section;
}

/** One line with a bar: `part` against `whole`, flagged when it is over. */
function loadLine(field: string, text: string, part: bigint, whole: bigint): HTMLElement {
  const over = part > whole;
  const line = el('div', over ? 'budget over' : 'budget');
  line.dataset.field = field;
  line.dataset.value = part.toString();
  line.append(el('span', 'budget-text', `${text} (${percent(part, whole)})`), bar(ratio(part, whole), 'budget', over));
  return line;
}

/** A host the file's machines sit on: its caches against its cache share and, with guest RAM, against its memory. */
function hostCard(host: HostView, actions: PanelActions): HTMLElement {
  const card = el('article', 'host');
  card.dataset.host = host.name;
  const head = el('header', 'host-head');
  head.append(el('h3', undefined, host.name));
  if (host.memory !== undefined) head.append(el('span', 'memory', `${formatSize(host.memory)} memory${host.listed ? '' : ' (assume.hostMemory)'}`));
  card.append(head);
  if (host.memory !== undefined && host.allowed !== undefined) {
    const shareText = host.cacheShare !== undefined ? ` (${formatShare(host.cacheShare, 2)} of its memory)` : '';
    card.append(
      loadLine('hostCaches', `Disk caches ${formatSize(host.caches)} of a ${formatSize(host.allowed)} cache share${shareText}`, host.caches, host.allowed),
      loadLine('hostNeeded', `Guest RAM ${formatSize(host.guestMemory)} and caches ${formatSize(host.needed)} of ${formatSize(host.memory)}`, host.needed, host.memory),
    );
  } else {
    card.append(el('p', 'none', `Disk caches ${formatSize(host.caches)}; the mapping file gives no memory for this host (hosts or assume.hostMemory).`));
  }
  const list = el('ul', 'host-machines');
  for (const machine of host.machines) {
    const item = el('li', machine.here ? 'here' : undefined);
    item.dataset.machine = machine.name;
    const name = custom('vscode-link', { class: 'machine-name', href: '#', title: `Show ${machine.name} in ${machine.file}` }, machine.name);
    name.addEventListener('click', (event) => { event.preventDefault(); actions.reveal(machine); });
    const memory = machine.memory !== undefined ? `${formatSize(machine.memory)} RAM, ` : '';
    item.append(name, el('span', 'host-machine-numbers', ` ${memory}${formatSize(machine.cacheMemoryTotal)} of caches, ${machine.file}`));
    list.append(item);
  }
  card.append(list);
  return card;
}

function hostsSection(hosts: readonly HostView[], actions: PanelActions): HTMLElement {
  const section = el('section', 'hosts');
  section.append(el('h2', undefined, hosts.length === 1 ? 'Host' : 'Hosts'));
  for (const host of hosts) section.append(hostCard(host, actions));
  return section;
}

/** The disk whose card carries the curve: the one picked, else the first one being tried, else the first. */
export function chartedDisk(view: PanelView, state: WhatIfState, selected: string | undefined): string | undefined {
  const disks = view.machines.flatMap((m) => m.disks);
  if (selected !== undefined && disks.some((d) => d.pointer === selected)) return selected;
  return (disks.find((d) => state.has(d.pointer)) ?? disks[0])?.pointer;
}

export function renderPanel(root: HTMLElement, view: PanelView, state: WhatIfState, actions: PanelActions, selected?: string): number {
  const scroll = window.scrollY;
  const content = el('main', 'panel');
  const header = el('header', 'file-head');
  header.append(el('h1', undefined, view.fileName));
  const profileText = `${view.profile.generation} driver defaults, ${view.profile.platform === 'linux' ? 'Linux' : 'non-Linux'} host`;
  header.append(el('span', 'profile', profileText));
  content.append(header);
  if (view.fileFindings.length > 0) content.append(findingList(view.fileFindings, actions));
  const charted = chartedDisk(view, state, selected);
  let disks = 0;
  for (const machine of view.machines) {
    content.append(machineSection(view, machine, state, actions, charted));
    disks += machine.disks.length;
  }
  if (view.machines.length === 0) content.append(el('p', 'none', 'No machine found in this file with the mapping\'s selectors.'));
  if (view.hosts.length > 0) content.append(hostsSection(view.hosts, actions));
  const notes = el('footer', 'cautions');
  for (const caution of view.cautions) notes.append(el('p', undefined, caution));
  content.append(custom('vscode-divider'), notes);
  root.replaceChildren(content);
  window.scrollTo(0, scroll);
  return disks;
}

export function renderEmpty(root: HTMLElement, reason: string): void {
  const content = el('main', 'panel empty');
  content.append(el('p', 'none', reason));
  root.replaceChildren(content);
}
