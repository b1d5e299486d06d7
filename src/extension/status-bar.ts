// The status bar item: the active definition's total cache memory over all disks and layers.
import * as vscode from 'vscode';
import { formatSize } from '../core/format';
import type { LintResult } from './linting';
import { fileCacheTotal } from './panel-view';

export class CacheStatus implements vscode.Disposable {
  private readonly item = vscode.window.createStatusBarItem('cachewright.cacheMemory', vscode.StatusBarAlignment.Right, 100);

  constructor() {
    this.item.name = 'cachewright cache memory';
    this.item.command = 'cachewright.showSizingPanel';
  }

  show(result: LintResult | undefined): void {
    if (!result) {
      this.item.hide();
      return;
    }
    const disks = result.report.disks.length;
    const total = fileCacheTotal(result.report);
    const problems = result.report.findings.filter((f) => !f.accepted && f.severity !== 'info').length;
    this.item.text = `$(server) ${formatSize(total)} cache${problems > 0 ? ` $(warning) ${problems}` : ''}`;
    this.item.tooltip = `cachewright: ${formatSize(total)} of qcow2 metadata cache over ${disks} disk${disks === 1 ? '' : 's'} and their backing layers in this file. Click for the sizing panel.`;
    this.item.show();
  }

  get text(): string {
    return this.item.text;
  }

  dispose(): void {
    this.item.dispose();
  }
}
