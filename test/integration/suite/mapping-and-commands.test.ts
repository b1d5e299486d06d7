// The mapping file's own checks, the commands, the status bar and the sizing panel's host side.
import * as assert from 'node:assert/strict';
import * as vscode from 'vscode';
import { formatSize } from '../../../src/core/format';
import { loadMapping } from '../../../src/lint';
import { proposeMapping } from '../../../src/extension/starter-proposal';
import { parse as parseYaml } from 'yaml';
import { api, codeOf, demoFile, open, ours, perf, rangeOf, revert, waitFor, workspaceRoot } from './helpers';

describe('the mapping file', () => {
  it('shows its own errors at their positions while it is edited', async () => {
    await api();
    const { document, editor } = await open('cachewright.yaml');
    assert.equal(ours(document.uri).length, 0, 'the demo mapping file is clean');
    const range = rangeOf(document, 'disks: "$.volumes[*]"', '"$.volumes[*]"');
    await editor.edit((b) => b.replace(range, '"$.volumes[*"'));
    const problem = await waitFor('a mapping-file diagnostic', () => ours(document.uri)[0]);
    assert.equal(problem.code, 'mapping-file');
    assert.equal(problem.severity, vscode.DiagnosticSeverity.Error);
    assert.equal(problem.range.start.line, range.start.line, `on the disks line: ${problem.message}`);
    assert.match(problem.message, /JSONPath/);
    await revert(document);
    await waitFor('the error to clear', () => ours(document.uri).length === 0);
  });

  it('reports an unknown key at that key', async () => {
    const { document, editor } = await open('cachewright.yaml');
    const range = rangeOf(document, 'budget:', 'budget');
    await editor.edit((b) => b.replace(range, 'budgets'));
    const problem = await waitFor('an unknown-key diagnostic', () => ours(document.uri)[0]);
    assert.match(problem.message, /budgets/);
    assert.equal(problem.range.start.line, range.start.line);
    await revert(document);
    await waitFor('the error to clear', () => ours(document.uri).length === 0);
  });

  it('is validated against the shipped JSON Schema when written as JSON', async () => {
    // A cachewright.json below the root is not a mapping cachewright loads, but the editor's JSON support
    // validates it with the schema the manifest associates.
    const probe = vscode.Uri.joinPath(workspaceRoot(), 'probe', 'cachewright.json');
    await vscode.workspace.fs.writeFile(probe, new TextEncoder().encode('{\n  "version": 1,\n  "disks": "$.volumes[*]",\n  "fields": { "disk": {} },\n  "colour": "blue"\n}\n'));
    const document = await vscode.workspace.openTextDocument(probe);
    await vscode.window.showTextDocument(document);
    const schemaProblem = await waitFor('the JSON language service to apply the schema',
      () => vscode.languages.getDiagnostics(probe).find((d) => /colour/.test(d.message) || /not allowed/i.test(d.message)), 20_000);
    assert.equal(schemaProblem.range.start.line, 4, schemaProblem.message);
    await vscode.commands.executeCommand('workbench.action.closeActiveEditor');
    await vscode.workspace.fs.delete(vscode.Uri.joinPath(workspaceRoot(), 'probe'), { recursive: true });
  });
});

describe('commands, status bar and panel', () => {
  it('registers its commands in one category', async () => {
    await api();
    const commands = await vscode.commands.getCommands(true);
    for (const id of ['cachewright.showSizingPanel', 'cachewright.lintWorkspace', 'cachewright.fixAllInFile', 'cachewright.createStarterMapping', 'cachewright.compareWithRevision', 'cachewright.acceptFinding']) {
      assert.ok(commands.includes(id), `${id} is registered`);
    }
    const manifest = vscode.extensions.getExtension('cachewright.cachewright')?.packageJSON as { contributes: { commands: { category: string }[] } };
    assert.ok(manifest.contributes.commands.every((c) => c.category === 'cachewright'));
  });

  it('lints the workspace: every included definition, none excluded', async () => {
    const summary = await vscode.commands.executeCommand<{ files: number; findings: number }>('cachewright.lintWorkspace');
    assert.equal(summary.files, 2, 'fleet/ticketing.yaml and fleet/harbour.json');
    assert.ok(summary.findings > 0);
    const harbour = demoFile('fleet/harbour.json');
    assert.ok(ours(harbour).length > 0, 'a file never opened has diagnostics from the background lint');
  });

  it('keeps files it never opened current through a file watcher', async () => {
    await api();
    const added = demoFile('fleet/added-later.yaml');
    // 200 GiB at 64 KiB clusters needs 25 MiB of L2 cache for full coverage [qcow2 specification].
    const text = 'vms:\n  - hostname: tern-new-04\n    ram: 8G\n    volumes:\n      - label: data\n        kind: qcow2\n        capacity: 200G\n        tuning:\n          l2: 1M\n';
    await vscode.workspace.fs.writeFile(added, new TextEncoder().encode(text));
    try {
      const found = await waitFor('diagnostics on a file created on disk', () => ours(added).find((d) => codeOf(d) === 'l2-cache-undersized'));
      assert.equal(found.range.start.line, 8);
      await vscode.workspace.fs.writeFile(added, new TextEncoder().encode(text.replace('l2: 1M', 'l2: 25M')));
      await waitFor('the finding to go when the file changes on disk', () => !ours(added).some((d) => codeOf(d) === 'l2-cache-undersized'));
    } finally {
      await vscode.workspace.fs.delete(added);
    }
    await waitFor('diagnostics to go with the file', () => ours(added).length === 0);
  });

  it('shows the active file\'s cache memory in the status bar', async () => {
    const cachewright = await api();
    const { document } = await open('fleet/ticketing.yaml');
    const result = await waitFor('a result', () => cachewright.result(document.uri));
    const text = await waitFor('the status text', () => (cachewright.statusText().includes('cache') ? cachewright.statusText() : undefined));
    // The item adds up every disk and layer of the file (the layers come from the images the
    // definitions name, where they can be read).
    const total = result.report.disks.reduce((sum, d) => sum + d.sizing.cacheMemoryTotal, 0n);
    assert.ok(total > 0n);
    assert.ok(text.includes(`${formatSize(total)} cache`), `${text} shows ${formatSize(total)}`);
  });

  it('opens the sizing panel beside the definition and follows edits', async () => {
    const cachewright = await api();
    const { document, editor } = await open('fleet/ticketing.yaml');
    await vscode.commands.executeCommand('cachewright.showSizingPanel');
    await waitFor('the panel to show ticketing.yaml', () => cachewright.panelShows() === document.uri.toString());
    const disks = await cachewright.refreshPanel(document.uri);
    assert.equal(disks, 4, 'four qcow2 disks drawn (the raw scratch disk is not sized)');
    // An edit re-renders the panel; the host measures lint + post + draw.
    const range = rangeOf(document, 'l2: 10M', '10M');
    const redraw = async (count: number): Promise<number> => {
      await waitFor('the panel to redraw after the edit', () => cachewright.timings().panelUpdates > count);
      return cachewright.timings().panelUpdateMs ?? -1;
    };
    const before = cachewright.timings().panelUpdates;
    await editor.edit((b) => b.replace(range, '6M'));
    const updated = await redraw(before);
    perf('panel update after an edit (lint + message + draw)', `${updated} ms (target under 100 ms)`);
    const samples: number[] = [];
    for (let i = 0; i < 5; i++) {
      const at = rangeOf(document, 'l2: 6M', '6M');
      let count = cachewright.timings().panelUpdates;
      await editor.edit((b) => b.replace(at, '7M'));
      samples.push(await redraw(count));
      count = cachewright.timings().panelUpdates;
      const back = rangeOf(document, 'l2: 7M', '7M');
      await editor.edit((b) => b.replace(back, '6M'));
      await redraw(count);
    }
    perf('panel update after an edit, 5 more samples', `${samples.join(', ')} ms`);
    await revert(document);
  });

  it('proposes a starter mapping from a definition that the real linter accepts', async () => {
    const { document } = await open('fleet/ticketing.yaml');
    const proposal = proposeMapping(parseYaml(document.getText()), 'fleet/ticketing.yaml');
    assert.ok(proposal);
    assert.equal(proposal.machines, '$.vms[*]');
    assert.equal(proposal.disks, '$.volumes[*]');
    assert.equal(proposal.diskFields.size, '$.capacity');
    assert.equal(proposal.diskFields.clusterSize, '$.block');
    assert.equal(proposal.diskFields.l2Cache, '$.tuning.l2');
    assert.equal(proposal.diskFields.combinedCache, '$.tuning.total');
    assert.match(proposal.guessed.combinedCache ?? '', /combined \(L2 \+ refcount\) cache/);
    assert.match(proposal.text, /combinedCache: "\$\.tuning\.total" +# guessed: /);
    assert.match(proposal.summary, /guessed from the key name alone: combinedCache, clusterSize/);
    assert.equal(proposal.diskFields.name, '$.label');
    assert.equal(proposal.machineFields.memory, '$.ram');
    assert.equal(proposal.machineFields.name, '$.hostname');
    const loaded = loadMapping(proposal.text, '/tmp/cachewright.yaml');
    assert.deepEqual(loaded.problems, [], proposal.text);
    assert.deepEqual(proposal.include, ['fleet/**/*.yaml', 'fleet/**/*.yml']);
  });

  it('proposes one from a JSON definition too, with its backing field', async () => {
    const { document } = await open('fleet/harbour.json');
    const proposal = proposeMapping(JSON.parse(document.getText()), 'fleet/harbour.json');
    assert.ok(proposal);
    assert.equal(proposal.machines, '$.vms[*]');
    assert.equal(proposal.disks, '$.volumes[*]');
    assert.equal(proposal.diskFields.backing, '$.base');
    assert.equal(proposal.diskFields.image, '$.file');
    assert.equal(proposal.diskFields.format, '$.kind');
    assert.deepEqual(proposal.include, ['fleet/**/*.json']);
    assert.deepEqual(loadMapping(proposal.text, '/tmp/cachewright.yaml').problems, [], proposal.text);
  });

  it('writes the starter mapping file once the user confirms, and lints with it', async () => {
    const cachewright = await api();
    const mappingUri = demoFile('cachewright.yaml');
    const saved = demoFile('cachewright.yaml.saved');
    await vscode.commands.executeCommand('workbench.action.closeAllEditors');
    await vscode.workspace.fs.rename(mappingUri, saved);
    try {
      await vscode.commands.executeCommand('cachewright.lintWorkspace');
      const { document } = await open('fleet/ticketing.yaml');
      await waitFor('no diagnostics without a mapping', () => ours(document.uri).length === 0);
      const written = await vscode.commands.executeCommand<vscode.Uri | undefined>('cachewright.createStarterMapping', { confirm: false });
      assert.ok(written, 'the file was written');
      assert.equal(written.toString(), mappingUri.toString());
      const text = new TextDecoder().decode(await vscode.workspace.fs.readFile(mappingUri));
      assert.match(text, /machines: "\$\.vms\[\*\]"/);
      await waitFor('diagnostics under the starter mapping', () => cachewright.result(document.uri) && ours(document.uri).length > 0);
    } finally {
      await vscode.commands.executeCommand('workbench.action.closeAllEditors');
      await vscode.workspace.fs.delete(mappingUri).then(undefined, () => undefined);
      await vscode.workspace.fs.rename(saved, mappingUri);
      await vscode.commands.executeCommand('cachewright.lintWorkspace');
    }
  });
});
