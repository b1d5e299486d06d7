import * as assert from 'node:assert/strict';
import * as vscode from 'vscode';
import { EXTENSION_ID, api } from './helpers';

describe('activation', () => {
  it('activates in a workspace with a mapping file', async () => {
    const ext = vscode.extensions.getExtension(EXTENSION_ID);
    assert.ok(ext, `extension ${EXTENSION_ID} is loaded in the host`);
    await api();
    assert.ok(ext.isActive);
  });

  it('declares limited support for untrusted workspaces', () => {
    const manifest = vscode.extensions.getExtension(EXTENSION_ID)?.packageJSON as { capabilities?: { untrustedWorkspaces?: { supported?: unknown } } };
    assert.equal(manifest.capabilities?.untrustedWorkspaces?.supported, 'limited');
  });
});
