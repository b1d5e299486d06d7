// The qcow2 image viewer: a read-only custom editor for *.qcow2 files (header facts, an allocation
// picture, the backing chain and the recommended caches). See docs/image-viewer.md.
//
// Commands it registers for tests and automation (not in the command palette), each taking an
// optional image URI string (default: the image whose viewer was active last):
//   cachewright.imageViewer.lastView  -> the last view model a webview drew, wire-encoded (decodeSnapshot)
//   cachewright.imageViewer.stop      -> stops a running walk; true when one was running
//   cachewright.imageViewer.reread    -> reads the image again; resolves when done
//   cachewright.imageViewer.setProfile (uri, { generation, platform }) -> the driver-default profile the
//                                     caches assume, as the webview's selector sets it
//   cachewright.imageViewer.stopAtFirstProgress (uri) -> the next walk of that image stops itself at its
//                                     first progress report, so a stop lands mid-walk deterministically
import * as vscode from 'vscode';
import { encodeSnapshot, type ProfileChoice } from '../../protocol/image-viewer';
import { IMAGE_VIEW_TYPE, ImageViewerProvider } from './provider';

export { IMAGE_VIEW_TYPE } from './provider';

export function registerImageViewer(context: vscode.ExtensionContext): void {
  const provider = new ImageViewerProvider(context.extensionUri);
  context.subscriptions.push(
    vscode.window.registerCustomEditorProvider(IMAGE_VIEW_TYPE, provider, {
      supportsMultipleEditorsPerDocument: true,
      webviewOptions: { retainContextWhenHidden: false },
    }),
    vscode.workspace.onDidGrantWorkspaceTrust(() => provider.readUntrusted()),
    vscode.commands.registerCommand('cachewright.imageViewer.lastView', (uri?: string) => {
      const snapshot = provider.snapshot(uri);
      return snapshot ? encodeSnapshot(snapshot) : undefined;
    }),
    vscode.commands.registerCommand('cachewright.imageViewer.stop', (uri?: string) => provider.stop(uri)),
    vscode.commands.registerCommand('cachewright.imageViewer.reread', async (uri?: string) => {
      await provider.reread(uri);
    }),
    vscode.commands.registerCommand('cachewright.imageViewer.setProfile', (uri: string | undefined, choice: ProfileChoice) => provider.setProfile(uri, choice)),
    vscode.commands.registerCommand('cachewright.imageViewer.stopAtFirstProgress', (uri: string) => provider.armStop(uri)),
  );
}
