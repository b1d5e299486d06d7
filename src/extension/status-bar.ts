// The status bar item: the active definition's total cache memory over all disks and layers, and
// how full the hosts its machines sit on are (the fullest one in the text, each one in the tooltip).
import * as vscode from 'vscode';
import { formatCounted, formatPercent, formatShare, formatSize } from '../core/format';
import type { HostReport } from '../lint';
import type { LintResult } from './linting';
import { fileCacheTotal } from './panel-view';

/** How full a host is, for ordering: over its memory first, then caches against its cache share. */
function pressure(host: HostReport): number {
  const { budget, load } = host;
  if (!budget || load.allowed === undefined) return -1;
  if (load.needed > budget.memory) return Number.POSITIVE_INFINITY;
  return load.allowed === 0n ? (load.caches > 0n ? Number.MAX_VALUE : 0) : Number((load.caches * 10_000n) / load.allowed) / 10_000;
}

/** The fullest host in a few words: "hv-07 over memory", "hv-07 caches 130 % of share". */
export function hostStatusText(hosts: readonly HostReport[]): string | undefined {
  const fullest = [...hosts].sort((a, b) => pressure(b) - pressure(a))[0];
  if (!fullest) return undefined;
  const more = hosts.length > 1 ? ` +${hosts.length - 1}` : '';
  const { budget, load } = fullest;
  if (!budget || load.allowed === undefined) return `$(vm) ${fullest.name} memory unknown${more}`;
  if (load.needed > budget.memory) return `$(vm) ${fullest.name} $(error) over memory${more}`;
  const over = load.caches > load.allowed;
  return `$(vm) ${fullest.name}${over ? ' $(warning)' : ''} ${formatPercent(load.caches, load.allowed)} of cache share${more}`;
}

/** One paragraph per host: its machines, caches against its cache share, RAM plus caches against its memory. */
export function hostTooltip(host: HostReport): string {
  const { budget, load, machines } = host;
  const head = `Host ${host.name}: ${formatCounted(machines.length, 'machine')}, ${formatSize(load.caches)} of disk caches`;
  if (!budget || load.allowed === undefined) return `${head}; the mapping file gives no memory for it (hosts or assume.hostMemory).`;
  const source = budget.listed ? '' : ' (assume.hostMemory)';
  const fits = load.needed > budget.memory ? 'more than' : 'within';
  return `${head} = ${formatPercent(load.caches, load.allowed)} of its cache share (${formatShare(budget.cacheShare, 2)} of ${formatSize(budget.memory)}${source} = ${formatSize(load.allowed)}). Guest RAM ${formatSize(load.guestMemory)} plus caches make ${formatSize(load.needed)}, ${fits} its memory.`;
}

export class CacheStatus implements vscode.Disposable {
  private readonly item = vscode.window.createStatusBarItem('cachewright.cacheMemory', vscode.StatusBarAlignment.Right, 100);

  constructor() {
    this.item.name = 'cachewright cache memory';
    this.item.command = 'cachewright.showSizingPanel';
  }

  show(result: LintResult | undefined, hosts: readonly HostReport[] = []): void {
    if (!result) {
      this.item.hide();
      return;
    }
    const disks = result.report.disks.length;
    const total = fileCacheTotal(result.report);
    const problems = result.report.findings.filter((f) => !f.accepted && f.severity !== 'info').length;
    const hostText = hostStatusText(hosts);
    this.item.text = `$(server) ${formatSize(total)} cache${problems > 0 ? ` $(warning) ${problems}` : ''}${hostText ? `  ${hostText}` : ''}`;
    const lines = [`cachewright: ${formatSize(total)} of qcow2 metadata cache over ${formatCounted(disks, 'disk')} and their backing layers in this file.`];
    for (const host of hosts) lines.push(hostTooltip(host));
    lines.push('Click for the sizing panel.');
    this.item.tooltip = lines.join('\n\n');
    this.item.show();
  }

  get text(): string {
    return this.item.text;
  }

  get tooltip(): string {
    return typeof this.item.tooltip === 'string' ? this.item.tooltip : this.item.tooltip?.value ?? '';
  }

  dispose(): void {
    this.item.dispose();
  }
}
