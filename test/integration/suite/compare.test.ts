// "Compare with a git revision..." in the real editor: the workspace copy of the demo becomes a
// temporary git repository with one tagged commit, an unsaved edit raises the ledger's L2 cache, and
// the command's markdown summary opens in the editor's markdown preview. The expected change comes
// from the qcow2 specification's L2 geometry [qcow2 specification, "L2 tables"]: one 8-byte entry
// per 64 KiB cluster, so the 1 TiB ledger needs 128 MiB of L2 cache for full coverage, and raising
// its 8 MiB to 128 MiB adds 120 MiB (the effective cache never exceeds full coverage).
import * as assert from 'node:assert/strict';
import { execFileSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as path from 'node:path';
import * as vscode from 'vscode';
import { api, cliFindings, open, rangeOf, waitFor, workspaceRoot } from './helpers';

type CompareResult = { ok: true; revision: string; uri: vscode.Uri; markdown: string } | { ok: false; error: string };

const compare = (revision: string) => vscode.commands.executeCommand<CompareResult>('cachewright.compareWithRevision', { revision });

describe('compare with a git revision', () => {
  let root = '';
  const git = (...args: string[]) => execFileSync('git', ['-c', 'user.name=review test', '-c', 'user.email=review@example.invalid', '-c', 'commit.gpgsign=false', ...args], { cwd: root, encoding: 'utf8' });

  before(async () => {
    await api();
    root = workspaceRoot().fsPath;
    // The workspace copy sits inside the project's own checkout: git must not look above it.
    process.env.GIT_CEILING_DIRECTORIES = path.dirname(root);
    // The web editor saves a changed file after a delay by default; this test's edit must stay unsaved.
    await vscode.workspace.getConfiguration('files').update('autoSave', 'off', vscode.ConfigurationTarget.Global);
  });

  after(async () => {
    // Whatever happened, later tests find the demo as it was committed here.
    if (fs.existsSync(path.join(root, '.git'))) git('checkout', '--', '.');
    delete process.env.GIT_CEILING_DIRECTORIES;
    fs.rmSync(path.join(root, '.git'), { recursive: true, force: true });
    await vscode.workspace.getConfiguration('files').update('autoSave', undefined, vscode.ConfigurationTarget.Global);
  });

  it('says clearly that a workspace outside any git repository has no revision to compare with', async () => {
    const result = await compare('HEAD');
    assert.equal(result.ok, false);
    assert.match(result.ok ? '' : result.error, /is not inside a git repository/);
  });

  it('compares the workspace, unsaved edits included, with a tag and opens the summary in the markdown preview', async () => {
    git('-c', 'init.defaultBranch=main', 'init', '--quiet');
    git('add', '-A');
    git('commit', '--quiet', '-m', 'timetable as deployed');
    git('tag', 'timetable-v1');
    const { document, editor } = await open('fleet/ticketing.yaml');
    try {
      assert.ok(await editor.edit((b) => b.replace(rangeOf(document, 'l2: 8M', '8M'), '128M')));
      const result = await compare('timetable-v1');
      assert.ok(result.ok, result.ok ? '' : result.error);
      const { markdown } = result;
      assert.match(markdown, /Compared with `timetable-v1`/);
      assert.match(markdown, /\| tern-db-01 \| quill-hv-north \| [^|]+ \| [^|]+ \| \+120 MiB \|/);
      assert.match(markdown, /Settled findings \(1, positions in the base\)/);
      assert.match(markdown, /`l2-cache-undersized` at \[fleet\/ticketing\.yaml:\d+\]\(file:\/\/[^)]*\/fleet\/ticketing\.yaml#L\d+\)/);
      // The base's ledger disk is judged by its measured trace, with the very message the command
      // line gives for the committed file (the work tree on disk is the base: the edit is unsaved).
      const committed = cliFindings('fleet/ticketing.yaml').find((f) => f.rule === 'l2-cache-undersized' && /measured trace/.test(f.message));
      assert.ok(committed, 'the command line judges the committed ledger disk by its trace');
      // The summary escapes only &, <, > and | in messages (src/review/markdown.ts).
      const asMarkdown = committed.message.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/\|/g, '\\|');
      assert.ok(markdown.includes(`: ${asMarkdown}`), `the settled finding says: ${committed.message}\n${markdown}`);
      const preview = await waitFor('the markdown preview', () => vscode.window.tabGroups.all.flatMap((g) => g.tabs)
        .find((t) => t.input instanceof vscode.TabInputWebview && /markdown\.preview/.test(t.input.viewType) && t.label.includes('timetable-v1')));
      assert.ok(preview.label.includes('timetable-v1'), preview.label);
      // Without a revision the command offers the branches, then the tags: accepting the first item takes the branch.
      let settled = false;
      const picked = vscode.commands.executeCommand<CompareResult>('cachewright.compareWithRevision').then((r) => { settled = true; return r; });
      await waitFor('the revision picker to be answered', async () => {
        if (!settled) await vscode.commands.executeCommand('workbench.action.acceptSelectedQuickOpenItem');
        return settled;
      });
      const viaPicker = await picked;
      assert.ok(viaPicker.ok, viaPicker.ok ? '' : viaPicker.error);
      assert.equal(viaPicker.revision, 'main');
      assert.match(viaPicker.markdown, /Compared with `main`/);
      // The base came from the revision alone: the work tree and the index are as they were.
      assert.equal(git('status', '--porcelain', '--untracked-files=no'), '');
    } finally {
      // The edit is undone in the document itself, then saved: the same bytes as the committed file,
      // whichever editor the preview left active.
      const edited = document.getText().indexOf('l2: 128M');
      if (edited >= 0) {
        const at = document.positionAt(edited + 'l2: '.length);
        const edit = new vscode.WorkspaceEdit();
        edit.replace(document.uri, new vscode.Range(at, at.translate(0, '128M'.length)), '8M');
        await vscode.workspace.applyEdit(edit);
      }
      if (document.isDirty) await document.save();
      assert.equal(git('status', '--porcelain', '--untracked-files=no'), '', 'the demo is back as committed');
    }
  });

  it('names a revision git does not know', async () => {
    const result = await compare('no-such-revision');
    assert.equal(result.ok, false);
    assert.match(result.ok ? '' : result.error, /"no-such-revision" names no commit/);
  });
});
