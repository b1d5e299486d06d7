// The extension's settings, changed the way a user does (workspace settings), in the real editor.
import * as assert from 'node:assert/strict';
import * as vscode from 'vscode';
import { api, codeOf, demoFile, open, ours, revert, waitFor } from './helpers';

const TICKETING = 'fleet/ticketing.yaml';

async function set(key: string, value: unknown): Promise<void> {
  await vscode.workspace.getConfiguration('cachewright').update(key, value, vscode.ConfigurationTarget.Workspace);
}

describe('settings', () => {
  after(async () => {
    await set('rules', undefined);
    await set('enable', undefined);
    await set('mappingFile', undefined);
    await set('fileSizeLimit', undefined);
    await set('traceSampleRate', undefined);
  });

  it('measures the ledger\'s trace on a sample when traceSampleRate asks for one, and exactly again without it', async () => {
    const { document } = await open(TICKETING);
    const ledger = (): vscode.Diagnostic | undefined => ours(document.uri).find((d) => codeOf(d) === 'l2-cache-undersized' && /On the measured trace/.test(d.message));
    assert.ok(!/estimated/.test((await waitFor('the exact measured finding', ledger, 20_000)).message));
    await set('traceSampleRate', 0.5);
    // Spatially hashed sampling at rate R counts the lookups of a share R of the entries and scales
    // by 1/R; the finding says it is an estimate and at which rate (docs/traces.md).
    const sampled = await waitFor('the finding from a 50 % sample', () => {
      const found = ledger();
      return found && /estimated from a 50 % sample/.test(found.message) ? found : undefined;
    }, 20_000);
    assert.match(sampled.message, /On the measured trace \(200,000 requests, estimated from a 50 % sample\)/);
    await set('traceSampleRate', undefined);
    await waitFor('the exact finding again', () => {
      const found = ledger();
      return found && !/estimated/.test(found.message) ? found : undefined;
    }, 20_000);
  });

  it('leaves a definition above fileSizeLimit unlinted, with one error naming its size and the limit, also while typing', async () => {
    const { document, editor } = await open(TICKETING);
    await waitFor('diagnostics', () => ours(document.uri).some((d) => codeOf(d) === 'l2-cache-undersized'));
    const bytes = Buffer.byteLength(document.getText());
    assert.ok(bytes > 1024, 'the demo definition is larger than 1 KiB');
    await set('fileSizeLimit', '1K');
    const only = (): vscode.Diagnostic | undefined => {
      const found = ours(document.uri);
      return found.length === 1 && codeOf(found[0]!) === 'parse-error' ? found[0] : undefined;
    };
    const single = await waitFor('one error for the whole file', only);
    // 1K = 1024 bytes [IEC 80000-13 binary prefixes, as the mapping file reads sizes]
    assert.match(single.message, new RegExp(`^ticketing\\.yaml is ~?[\\d.]+ KiB \\(${bytes} bytes\\), above the size limit of 1 KiB for definition files, so it is not linted; raise the cachewright\\.fileSizeLimit setting to lint it$`));
    assert.equal(single.severity, vscode.DiagnosticSeverity.Error);
    assert.equal(single.range.start.line, 0);
    try {
      await editor.edit((edit) => edit.insert(new vscode.Position(0, 0), '# typed while above the limit\n'));
      await new Promise((resolve) => setTimeout(resolve, 600));
      assert.ok(only(), `still one error after typing: ${ours(document.uri).map(codeOf).join(', ')}`);
    } finally {
      await revert(document);
    }
    await set('fileSizeLimit', undefined);
    await waitFor('linted again under the default limit', () => ours(document.uri).some((d) => codeOf(d) === 'l2-cache-undersized'));
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
