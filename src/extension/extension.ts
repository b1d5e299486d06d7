// The VS Code adapter's entry point: wires the editor to the linter and presents its results.
// Everything here adapts; the sizing and the rules live in the engine.
import * as path from 'node:path';
import * as vscode from 'vscode';
import { parse as parseYaml } from 'yaml';
import type { SourceRange } from '../core/results';
import { CAUTIONS } from '../core/cautions';
import { CachewrightCodeActions, fixAllInDocument } from './code-actions';
import { toRange, workspaceEdit } from './edits';
import { Linting, type LintResult, type Timings } from './linting';
import { SizingPanel } from './panel';
import { hostViews, panelView } from './panel-view';
import { CacheStatus } from './status-bar';
import { proposeMapping } from './starter-proposal';
import { setDiskSizesEdit } from '../model/disk-edits';
import { registerImageViewer } from './image-viewer';
import { acceptFinding, ACCEPT_FINDING_COMMAND, type AcceptRequest } from './accept-finding';
import { compareWithRevision, ReviewDocuments, type CompareRequest } from './compare-revision';
import type { WhatIfValues } from '../protocol/panel';

/** What the extension exports: read by the integration tests, useful to other extensions. */
export interface CachewrightApi {
  timings(): Timings & { panelUpdateMs?: number; panelUpdates: number; panelRenderMs?: number };
  result(uri: vscode.Uri): LintResult | undefined;
  panelShows(): string | undefined;
  /** Resolves when the panel has drawn the view for the current state of this document. */
  refreshPanel(uri: vscode.Uri): Promise<number>;
  statusText(): string;
  statusTooltip(): string;
  /** Resolves once mapping files are loaded and the open definitions are linted. */
  ready: Promise<void>;
}

const DEFINITION_SELECTOR: vscode.DocumentSelector = [
  { language: 'yaml', scheme: 'file' }, { language: 'json', scheme: 'file' }, { language: 'jsonc', scheme: 'file' },
];

export function activate(context: vscode.ExtensionContext): CachewrightApi {
  const timings: Timings = { activatedAt: Date.now() };
  const linting = new Linting(context.extensionUri, timings);
  const status = new CacheStatus();
  const reviews = new ReviewDocuments();
  let panelUpdateMs: number | undefined;
  let panelUpdates = 0;
  let lastDefinition: vscode.Uri | undefined;
  const viewOf = (result: LintResult) => panelView(result.uri.toString(), result.version ?? 0, result.report, result.mapping,
    hostViews(linting.hosts.hostsOf(result.mapping, result.report), result.report, result.mapping, (file) => vscode.Uri.file(file).toString()));
  const showStatus = (result: LintResult | undefined): void => status.show(result, result ? linting.hosts.hostsOf(result.mapping, result.report) : []);

  const reveal = async (uri: vscode.Uri, range: SourceRange): Promise<void> => {
    const document = await vscode.workspace.openTextDocument(uri);
    const visible = vscode.window.visibleTextEditors.find((e) => e.document.uri.toString() === uri.toString());
    const editor = await vscode.window.showTextDocument(document, { viewColumn: visible?.viewColumn ?? vscode.ViewColumn.One, preserveFocus: false });
    const at = toRange(range);
    // The cursor goes to the first line of the disk; the whole disk is scrolled into view.
    editor.selection = new vscode.Selection(at.start, at.start);
    editor.revealRange(at, vscode.TextEditorRevealType.InCenterIfOutsideViewport);
  };

  const applyWhatIf = async (uri: vscode.Uri, _version: number, pointer: string, values: WhatIfValues): Promise<{ ok: boolean; message: string }> => {
    const document = await vscode.workspace.openTextDocument(uri);
    const result = linting.fresh(document);
    if (!result) return { ok: false, message: 'This file is not one the mapping file includes.' };
    const outcome = setDiskSizesEdit(uri.fsPath, document.getText(), result.mapping, pointer, values);
    if (!outcome.ok) return { ok: false, message: outcome.error };
    const applied = await vscode.workspace.applyEdit(workspaceEdit(document, [outcome.value.edit]));
    return applied
      ? { ok: true, message: `Wrote ${outcome.value.fields.join(', ')} into the definition (not saved). ${CAUTIONS.reopen}` }
      : { ok: false, message: 'The editor refused the edit; the file may have changed.' };
  };

  // Forward reference: the panel's ready handler draws the current file.
  let updatePanel: (uri?: vscode.Uri) => Promise<number> = async () => 0;
  const panel = new SizingPanel(context.extensionUri, {
    reveal: (uri, range) => void reveal(uri, range),
    apply: applyWhatIf,
    ready: () => void updatePanel(),
  });

  updatePanel = async (uri?: vscode.Uri): Promise<number> => {
    if (!panel.visible) return 0;
    const target = uri ?? lastDefinition;
    if (!target) return panel.empty('Open a definition file that the mapping file includes to see its disks here.');
    const document = vscode.workspace.textDocuments.find((d) => d.uri.toString() === target.toString());
    const result = document ? linting.fresh(document) : linting.result(target);
    if (!result) return panel.empty(`${path.basename(target.fsPath)} is not included by a mapping file (cachewright.yaml), so it has no disks to show.`);
    return panel.show(viewOf(result));
  };

  const followEditor = (editor: vscode.TextEditor | undefined): void => {
    const document = editor?.document;
    const included = document !== undefined && linting.isDefinition(document);
    void vscode.commands.executeCommand('setContext', 'cachewright.activeFileIncluded', included);
    if (!document || !included) {
      // A panel or an output view is focused, or another file: keep showing the last definition.
      if (document && document.uri.scheme === 'file' && !included) showStatus(undefined);
      return;
    }
    lastDefinition = document.uri;
    showStatus(linting.fresh(document));
    void updatePanel(document.uri);
  };

  const activeDocument = (): vscode.TextDocument | undefined => {
    const editor = vscode.window.activeTextEditor;
    if (editor) return editor.document;
    return lastDefinition ? vscode.workspace.textDocuments.find((d) => d.uri.toString() === lastDefinition?.toString()) : undefined;
  };

  context.subscriptions.push(
    linting,
    status,
    panel,
    vscode.languages.registerCodeActionsProvider(DEFINITION_SELECTOR, new CachewrightCodeActions(linting), {
      providedCodeActionKinds: CachewrightCodeActions.kinds,
    }),
    linting.onDidLint((result) => {
      const active = vscode.window.activeTextEditor?.document.uri.toString();
      if (result.uri.toString() === active) showStatus(result);
      if (panel.visible && panel.shownUri === result.uri.toString()) {
        const started = Date.now();
        void panel.show(viewOf(result)).then(() => {
          panelUpdateMs = Date.now() - started + (timings.lastLintMs ?? 0);
          panelUpdates++;
        });
      }
    }),
    linting.onDidReloadMappings(() => followEditor(vscode.window.activeTextEditor)),
    // The hosts were summed again (this file or another changed): the status bar and the panel follow.
    linting.hosts.onDidUpdate(() => {
      const active = vscode.window.activeTextEditor?.document;
      if (active && linting.isDefinition(active)) showStatus(linting.result(active.uri));
      if (panel.visible && panel.shownUri !== undefined) void updatePanel(vscode.Uri.parse(panel.shownUri));
    }),
    vscode.window.onDidChangeActiveTextEditor(followEditor),
    vscode.window.onDidChangeTextEditorSelection((event) => {
      if (!panel.visible || panel.shownUri !== event.textEditor.document.uri.toString()) return;
      const result = linting.result(event.textEditor.document.uri);
      const offset = event.textEditor.document.offsetAt(event.selections[0]?.active ?? new vscode.Position(0, 0));
      const disk = result?.report.disks.find((d) => offset >= d.range.offset && offset <= d.range.offset + d.range.length);
      if (disk) panel.focusDisk(disk.pointer);
    }),

    vscode.commands.registerCommand('cachewright.showSizingPanel', async () => {
      const document = activeDocument();
      if (document && linting.isDefinition(document)) lastDefinition = document.uri;
      panel.open(true);
      return updatePanel();
    }),
    vscode.commands.registerCommand('cachewright.lintWorkspace', async () => {
      await linting.reloadMappings();
      linting.forgetUnfinishedTraces();
      const summary = await linting.lintWorkspace(true);
      if (linting.mappings.all().length === 0) {
        void vscode.window.showWarningMessage('cachewright: no mapping file (cachewright.yaml or cachewright.json) at the root of a workspace folder. Create one with "cachewright: Create a starter mapping file from this definition".');
      } else {
        void vscode.window.setStatusBarMessage(`cachewright: ${summary.files} definition${summary.files === 1 ? '' : 's'} linted, ${summary.findings} finding${summary.findings === 1 ? '' : 's'}`, 5000);
      }
      return summary;
    }),
    vscode.commands.registerCommand('cachewright.fixAllInFile', async () => {
      const document = activeDocument();
      if (!document || !linting.isDefinition(document)) {
        void vscode.window.showInformationMessage('cachewright: the active file is not a definition the mapping file includes.');
        return 0;
      }
      const applied = await fixAllInDocument(linting, document);
      void vscode.window.setStatusBarMessage(`cachewright: applied ${applied} fix${applied === 1 ? '' : 'es'} (not saved)`, 5000);
      return applied;
    }),
    reviews,
    vscode.commands.registerCommand(ACCEPT_FINDING_COMMAND, (request: AcceptRequest) => acceptFinding(linting, request)),
    vscode.commands.registerCommand('cachewright.compareWithRevision', (request?: CompareRequest) => compareWithRevision(linting.mappings.all(), reviews, request, () => linting.reviewTraces())),
    vscode.commands.registerCommand('cachewright.createStarterMapping', (options?: { confirm?: boolean }) =>
      createStarterMapping(linting, activeDocument(), options?.confirm !== false)),
  );

  registerImageViewer(context);

  const ready = linting.start().then(() => followEditor(vscode.window.activeTextEditor));

  return {
    timings: () => ({ ...timings, panelUpdateMs, panelUpdates, panelRenderMs: panel.lastRender?.ms }),
    result: (uri) => linting.result(uri),
    panelShows: () => panel.shownUri,
    refreshPanel: (uri) => updatePanel(uri),
    statusText: () => status.text,
    statusTooltip: () => status.tooltip,
    ready,
  };
}

async function createStarterMapping(linting: Linting, document: vscode.TextDocument | undefined, confirm: boolean): Promise<vscode.Uri | undefined> {
  if (!document || !['yaml', 'json', 'jsonc'].includes(document.languageId)) {
    void vscode.window.showInformationMessage('cachewright: open a YAML or JSON VM definition first; the starter mapping is proposed from it.');
    return undefined;
  }
  const folder = vscode.workspace.getWorkspaceFolder(document.uri);
  if (!folder) {
    void vscode.window.showInformationMessage('cachewright: the definition must be inside a workspace folder, where the mapping file will be written.');
    return undefined;
  }
  let data: unknown;
  try {
    data = parseYaml(document.getText());
  } catch (error) {
    void vscode.window.showErrorMessage(`cachewright: ${path.basename(document.uri.fsPath)} cannot be read: ${error instanceof Error ? error.message.split('\n')[0] : String(error)}`);
    return undefined;
  }
  const relative = path.relative(folder.uri.fsPath, document.uri.fsPath).split(path.sep).join('/');
  const proposal = proposeMapping(data, relative);
  if (!proposal) {
    void vscode.window.showWarningMessage('cachewright: no list of disk-like objects (with size, cluster or cache keys) found in this file; write the mapping file by hand.');
    return undefined;
  }
  const target = vscode.Uri.joinPath(folder.uri, 'cachewright.yaml');
  if (linting.mappings.all().some((s) => s.folder.uri.toString() === folder.uri.toString())) {
    void vscode.window.showWarningMessage(`cachewright: ${folder.name} already has a mapping file; it was left as it is.`);
    return undefined;
  }
  if (confirm) {
    const choice = await vscode.window.showInformationMessage(
      `Write cachewright.yaml with these selectors? ${proposal.summary}`,
      { modal: true, detail: proposal.text },
      'Write cachewright.yaml',
    );
    if (choice !== 'Write cachewright.yaml') return undefined;
  }
  await vscode.workspace.fs.writeFile(target, new TextEncoder().encode(proposal.text));
  await linting.reloadMappings();
  void linting.lintWorkspace(false);
  await vscode.window.showTextDocument(target, { viewColumn: vscode.ViewColumn.Beside, preview: false });
  return target;
}

export function deactivate(): void {
  // Every resource is a disposable on the context; nothing else to release.
}
