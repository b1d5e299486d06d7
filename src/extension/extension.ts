// The VS Code adapter's entry point: wires the editor to the linter, nothing more.
import * as vscode from 'vscode';

export function activate(context: vscode.ExtensionContext): void {
  context.subscriptions.push(
    vscode.commands.registerCommand('diskwise.lintWorkspace', () => {
      void vscode.window.showInformationMessage('diskwise: lint started');
    }),
  );
}

export function deactivate(): void {
  // Every resource is a disposable on the context; nothing else to release.
}
