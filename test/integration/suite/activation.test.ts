import * as assert from 'node:assert/strict';
import * as vscode from 'vscode';

const EXTENSION_ID = 'diskwise-dev.diskwise';

describe('activation', () => {
  it('activates and registers its commands', async () => {
    const ext = vscode.extensions.getExtension(EXTENSION_ID);
    assert.ok(ext, `extension ${EXTENSION_ID} is loaded in the host`);
    await ext.activate();
    const commands = await vscode.commands.getCommands(true);
    assert.ok(commands.includes('diskwise.lintWorkspace'), 'diskwise.lintWorkspace is registered');
  });
});
