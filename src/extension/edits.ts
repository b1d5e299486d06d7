// The linter's fixes are offset/length edits into the text it linted; the editor wants ranges.
import * as vscode from 'vscode';
import type { SourceRange, TextEdit } from '../core/results';

/** From the linter's 1-based lines and columns (UTF-16 units, as the editor counts them). */
export function toRange(range: SourceRange): vscode.Range {
  return new vscode.Range(range.line - 1, range.column - 1, range.endLine - 1, range.endColumn - 1);
}

export function toTextEdit(document: vscode.TextDocument, edit: TextEdit): vscode.TextEdit {
  const start = document.positionAt(edit.offset);
  const end = document.positionAt(edit.offset + edit.length);
  return vscode.TextEdit.replace(new vscode.Range(start, end), edit.text);
}

export function workspaceEdit(document: vscode.TextDocument, edits: readonly TextEdit[]): vscode.WorkspaceEdit {
  const result = new vscode.WorkspaceEdit();
  result.set(document.uri, edits.map((edit) => toTextEdit(document, edit)));
  return result;
}
