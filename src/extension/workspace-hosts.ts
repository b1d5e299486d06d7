// The host rule needs the whole fleet: after any definition is linted (an open editor's text or a
// file on disk), the engine's cross-file step runs again over the latest report of every included
// file, a moment later and off the keystroke path. Its findings go to the file of the first machine
// on each host; the status bar and the panel read the host reports it leaves behind.
import * as vscode from 'vscode';
import { HostPassMemo, runHostPass, type Finding, type HostReport, type Mapping } from '../lint';
import type { FileReport } from '../lint';
import { readSettings } from './settings';
import { sameItems } from '../core/same-data';

/** What the step reads of one linted definition. */
export interface LintedDefinition {
  uri: vscode.Uri;
  report: FileReport;
  mapping: Mapping;
}

export interface HostSource {
  /** The latest result of every included definition. */
  results(): Iterable<LintedDefinition>;
  /** The host findings of this file changed: show its diagnostics again. */
  republish(uri: vscode.Uri): void;
}

/** Delay after the last lint before the hosts are summed again: a burst of edits or file events runs it once. */
export const HOST_PASS_DELAY_MS = 150;

export class WorkspaceHosts implements vscode.Disposable {
  private timer: NodeJS.Timeout | undefined;
  /** Host findings by file URI, as the last pass placed them. */
  private findings = new Map<string, Finding[]>();
  /** Host reports by mapping file path. */
  private reports = new Map<string, HostReport[]>();
  /** The last pass's results by mapping file path, for the next pass to reuse. */
  private memos = new Map<string, HostPassMemo>();
  private readonly emitter = new vscode.EventEmitter<void>();
  /** Fires after a pass that changed the host reports. */
  readonly onDidUpdate = this.emitter.event;
  /** Passes run so far (the tests wait for one after an edit). */
  passes = 0;

  constructor(private readonly source: HostSource, private readonly delayMs = HOST_PASS_DELAY_MS) {}

  /** Asks for a pass soon; called after every lint, so it never runs while the user types. */
  schedule(): void {
    if (this.timer) clearTimeout(this.timer);
    this.timer = setTimeout(() => {
      this.timer = undefined;
      this.run();
    }, this.delayMs);
  }

  /** One pass over every definition's latest report, per mapping file. */
  run(): void {
    const groups = new Map<string, { mapping: Mapping; files: { uri: vscode.Uri; report: FileReport }[] }>();
    const memos = new Map<string, HostPassMemo>();
    for (const result of this.source.results()) {
      const group = groups.get(result.mapping.path) ?? { mapping: result.mapping, files: [] };
      // Results linted after a mapping reload carry the newer mapping: the group takes that one.
      group.mapping = result.mapping;
      group.files.push({ uri: result.uri, report: result.report });
      groups.set(result.mapping.path, group);
    }
    const findings = new Map<string, Finding[]>();
    const reports = new Map<string, HostReport[]>();
    let changed = this.memos.size !== groups.size;
    for (const [mappingPath, { mapping, files }] of groups) {
      // The step appends to each file's list: it gets empty lists, the reports stay as linted.
      const workspace = files.map(({ uri, report }) => {
        const added: Finding[] = [];
        return { uri, path: uri.fsPath, machines: report.machines, findings: added };
      });
      // A host whose machines did not change keeps its findings (the same objects): most passes,
      // after an edit in one file, judge only the hosts that file's machines sit on.
      const memo = this.memos.get(mappingPath) ?? new HostPassMemo();
      memos.set(mappingPath, memo);
      const pass = runHostPass(workspace, mapping, { severities: readSettings(vscode.Uri.file(mappingPath)).rules }, memo);
      if (pass.changed) changed = true;
      for (const file of workspace) if (file.findings.length > 0) findings.set(file.uri.toString(), file.findings);
      reports.set(mappingPath, pass.reports);
    }
    const before = this.findings;
    this.findings = findings;
    this.reports = reports;
    this.memos = memos;
    this.passes++;
    if (!changed) return;
    for (const key of new Set([...before.keys(), ...findings.keys()])) {
      // By identity: the step hands back the very objects of a host it did not judge again.
      if (!sameItems(before.get(key) ?? [], findings.get(key) ?? [])) this.source.republish(vscode.Uri.parse(key));
    }
    // The status bar and the panel redraw only when a host's figures or machines changed.
    this.emitter.fire();
  }

  /**
   * The host findings placed in this file, moved to where its latest report puts the machines: an
   * edit above them shifts them at once, before the next pass recomputes the sums.
   */
  findingsFor(uri: vscode.Uri, report: FileReport): Finding[] {
    const placed = this.findings.get(uri.toString()) ?? [];
    return placed.flatMap((finding) => {
      const machine = report.machines.find((m) => m.hostPointer === finding.pointer && m.host === finding.host);
      if (!machine?.hostRange) return [];
      const related = finding.related?.map((r) => {
        if (r.file !== undefined && r.file !== uri.fsPath) return r;
        const at = report.machines.find((m) => m.pointer === r.pointer);
        return at ? { ...r, range: at.range } : r;
      });
      return [{ ...finding, range: machine.hostRange, ...(related ? { related } : {}) }];
    });
  }

  /** The hosts this file's machines sit on, with every machine of the workspace placed there. */
  hostsOf(mapping: Mapping, report: FileReport): HostReport[] {
    const names = new Set(report.machines.flatMap((m) => (m.host !== undefined ? [m.host] : [])));
    return (this.reports.get(mapping.path) ?? []).filter((host) => names.has(host.name));
  }

  dispose(): void {
    if (this.timer) clearTimeout(this.timer);
    this.emitter.dispose();
  }
}
