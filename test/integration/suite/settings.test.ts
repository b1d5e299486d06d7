// The extension's settings, changed the way a user does (workspace settings), in the real editor.
import * as assert from 'node:assert/strict';
import * as vscode from 'vscode';
import { api, codeOf, open, ours, waitFor } from './helpers';

const TICKETING = 'fleet/ticketing.yaml';

async function set(key: string, value: unknown): Promise<void> {
  await vscode.workspace.getConfiguration('diskwise').update(key, value, vscode.ConfigurationTarget.Workspace);
}

describe('settings', () => {
  after(async () => {
    await set('rules', undefined);
    await set('enable', undefined);
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
});
