// The extension's settings, changed the way a user does (workspace settings), in the real editor.
import * as assert from 'node:assert/strict';
import * as vscode from 'vscode';
import { api, codeOf, demoFile, open, ours, waitFor } from './helpers';

const TICKETING = 'fleet/ticketing.yaml';

async function set(key: string, value: unknown): Promise<void> {
  await vscode.workspace.getConfiguration('cachewright').update(key, value, vscode.ConfigurationTarget.Workspace);
}

describe('settings', () => {
  after(async () => {
    await set('rules', undefined);
    await set('enable', undefined);
    await set('mappingFile', undefined);
  });

  it('overrides a rule\'s severity, or turns it off', async () => {
    await api();
    const { document } = await open(TICKETING);
    await waitFor('cluster-cow-amplification', () => ours(document.uri).some((d) => codeOf(d) === 'cluster-cow-amplification'));
    await set('rules', { 'cluster-cow-amplification': 'off' });
    await waitFor('the rule to be off', () => !ours(document.uri).some((d) => codeOf(d) === 'cluster-cow-amplification'));
    await set('rules', { 'cluster-cow-amplification': 'error' });
    const raised = await waitFor('the rule as an error', () => {
      const found = ours(document.uri).filter((d) => codeOf(d) === 'cluster-cow-amplification');
      return found.length > 0 && found.every((d) => d.severity === vscode.DiagnosticSeverity.Error) ? found : undefined;
    });
    assert.ok(raised.length >= 2);
    await set('rules', undefined);
    await waitFor('the default severity again', () => ours(document.uri).some((d) => codeOf(d) === 'cluster-cow-amplification' && d.severity === vscode.DiagnosticSeverity.Warning));
  });

  it('can be disabled and enabled again', async () => {
    const { document } = await open(TICKETING);
    await waitFor('diagnostics', () => ours(document.uri).length > 0);
    await set('enable', false);
    await waitFor('no diagnostics while disabled', () => ours(document.uri).length === 0);
    await set('enable', undefined);
    await waitFor('diagnostics again', () => ours(document.uri).length > 0);
  });

  it('uses the mapping file the setting names, and lints only what that one includes', async () => {
    const root = new TextDecoder().decode(await vscode.workspace.fs.readFile(demoFile('cachewright.yaml')));
    // The same mapping placed in fleet/, including only YAML files below it.
    const yamlOnly = root.replace(/^include:.*$/m, 'include: ["*.yaml"]').replace(/^exclude:.*$/m, '').replace(/^accept:[\s\S]*$/m, '');
    const alternative = demoFile('fleet/yaml-only.mapping.yaml');
    await vscode.workspace.fs.writeFile(alternative, new TextEncoder().encode(yamlOnly));
    const harbour = demoFile('fleet/harbour.json');
    try {
      await vscode.commands.executeCommand('cachewright.lintWorkspace');
      await waitFor('harbour.json linted under the root mapping', () => ours(harbour).length > 0);
      await set('mappingFile', 'fleet/yaml-only.mapping.yaml');
      await waitFor('harbour.json left out by the configured mapping', () => ours(harbour).length === 0);
      const { document } = await open(TICKETING);
      await waitFor('ticketing.yaml still linted', () => ours(document.uri).some((d) => codeOf(d) === 'l2-cache-undersized'));
    } finally {
      await set('mappingFile', undefined);
      await vscode.workspace.fs.delete(alternative);
    }
    await waitFor('harbour.json linted again under the root mapping', () => ours(harbour).length > 0);
  });
});
