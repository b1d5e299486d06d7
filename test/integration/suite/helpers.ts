// Small helpers for tests that run inside the real extension host.
import * as assert from 'node:assert/strict';
import { execFileSync } from 'node:child_process';
import * as vscode from 'vscode';
import type { CachewrightApi } from '../../../src/extension/extension';

export const EXTENSION_ID = 'cachewright.cachewright';

export async function api(): Promise<CachewrightApi> {
  const ext = vscode.extensions.getExtension<CachewrightApi>(EXTENSION_ID);
  assert.ok(ext, `extension ${EXTENSION_ID} is loaded in the host`);
  const exported = await ext.activate();
  await exported.ready;
  return exported;
}

export function workspaceRoot(): vscode.Uri {
  const folder = vscode.workspace.workspaceFolders?.[0];
  assert.ok(folder, 'the test workspace (a copy of examples/) is open');
  return folder.uri;
}

export const demoFile = (relative: string): vscode.Uri => vscode.Uri.joinPath(workspaceRoot(), ...relative.split('/'));

/** Polls until `probe` returns a value that is not undefined/false, or fails after `ms`. */
export async function waitFor<T>(what: string, probe: () => T | undefined | false | Promise<T | undefined | false>, ms = 10_000): Promise<T> {
  const deadline = Date.now() + ms;
  for (;;) {
    const value = await probe();
    if (value !== undefined && value !== false) return value;
    if (Date.now() > deadline) throw new Error(`timed out after ${ms} ms waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, 25));
  }
}

export function ours(uri: vscode.Uri): vscode.Diagnostic[] {
  return vscode.languages.getDiagnostics(uri).filter((d) => d.source === 'cachewright');
}

export function codeOf(diagnostic: vscode.Diagnostic): string | undefined {
  const code = diagnostic.code;
  if (typeof code === 'object' && code !== null) return String(code.value);
  return code === undefined ? undefined : String(code);
}

/** The range of the first occurrence of `needle` on the line that contains `lineMarker`. */
export function rangeOf(document: vscode.TextDocument, lineMarker: string, needle: string): vscode.Range {
  const text = document.getText();
  const lineStart = text.indexOf(lineMarker);
  assert.ok(lineStart >= 0, `"${lineMarker}" is in ${document.uri.fsPath}`);
  const at = text.indexOf(needle, lineStart);
  assert.ok(at >= 0, `"${needle}" follows "${lineMarker}"`);
  return new vscode.Range(document.positionAt(at), document.positionAt(at + needle.length));
}

export async function open(relative: string): Promise<{ document: vscode.TextDocument; editor: vscode.TextEditor }> {
  const document = await vscode.workspace.openTextDocument(demoFile(relative));
  const editor = await vscode.window.showTextDocument(document, { viewColumn: vscode.ViewColumn.One, preview: false });
  return { document, editor };
}

/** Restores a file to its text on disk (tests edit the workspace copy, never save). */
export async function revert(document: vscode.TextDocument): Promise<void> {
  if (!document.isDirty) return;
  await vscode.window.showTextDocument(document, { viewColumn: vscode.ViewColumn.One, preview: false });
  await vscode.commands.executeCommand('workbench.action.files.revert');
  await waitFor('the revert', () => !document.isDirty);
}

/** One line for the performance summary the launcher prints. */
export function perf(label: string, value: string): void {
  console.log(`perf: ${label}: ${value}`);
}

export interface CliFinding { rule: string; message: string; line: number; column: number; fix?: { title: string; edits: { text: string }[] }; accepted?: { reason: string } }

/** The command line's findings for a workspace file, from its JSON output (CONTRACTS.md section 3). */
export function cliFindings(relative: string): CliFinding[] {
  const extension = vscode.extensions.getExtension(EXTENSION_ID);
  assert.ok(extension, 'the extension is installed');
  const cli = vscode.Uri.joinPath(extension.extensionUri, 'dist', 'cli.js').fsPath;
  // The extension host's own runtime runs the CLI (an electron host runs as node with this variable).
  const run = (): string => {
    try {
      return execFileSync(process.execPath, [cli, 'lint', relative, '--format', 'json'], { cwd: workspaceRoot().fsPath, encoding: 'utf8', env: { ...process.env, ELECTRON_RUN_AS_NODE: '1' } });
    } catch (error) {
      // Findings make the exit code non-zero; the JSON is still on stdout.
      const stdout = (error as { stdout?: string }).stdout;
      if (typeof stdout === 'string' && stdout.startsWith('{')) return stdout;
      throw error;
    }
  };
  const parsed = JSON.parse(run()) as { files: { findings: CliFinding[] }[] };
  return parsed.files.flatMap((f) => f.findings);
}
