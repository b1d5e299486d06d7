// Loaded by the editor's extension host as its test runner during the activation benchmark (it
// replaces the integration suite): waits for the extension's first published diagnostics and prints
// the extension's own timings on one marked line for the launcher, then resolves.
import * as vscode from 'vscode';
import type { CachewrightApi } from '../../../src/extension/extension';
import { PROBE_MARK } from './activation-mark';

export async function run(): Promise<void> {
  const started = Date.now();
  const extension = vscode.extensions.getExtension<CachewrightApi>('cachewright.cachewright');
  if (!extension) throw new Error('the extension under development is not loaded');
  // Normally already activated by its workspaceContains event; activate() then only returns its API.
  const api = extension.isActive ? extension.exports : await extension.activate();
  while (api.timings().firstDiagnosticsMs === undefined) {
    if (Date.now() - started > 60_000) throw new Error('no diagnostics within 60 s');
    await new Promise((resolve) => setTimeout(resolve, 10));
  }
  const timings = api.timings();
  console.log(`${PROBE_MARK} ${JSON.stringify({ firstDiagnosticsMs: timings.firstDiagnosticsMs, mappingsLoadedMs: timings.mappingsLoadedMs })}`);
}
