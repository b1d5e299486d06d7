// The linter's fixes are offset/length edits into the text it linted; the editor wants ranges.
import * as vscode from 'vscode';
import type { Fix, SourceRange, TextEdit } from '../core/results';

export function toRange(document: vscode.TextDocument, range: SourceRange): vscode.Range {
  return new vscode.Range(document.positionAt(range.offset), document.positionAt(range.offset + range.length));
}

export function toTextEdit(document: vscode.TextDocument, edit: TextEdit): vscode.TextEdit {
  const start = document.positionAt(edit.offset);
  const end = document.positionAt(edit.offset + edit.length);
  return vscode.TextEdit.replace(new vscode.Range(start, end), edit.text);
}

/**
 * Edits of several fixes that can be applied together: each fix whole or not at all, none
 * overlapping another (the rest are left for the next lint, which computes them afresh).
 */
export function compatibleEdits(fixes: readonly Fix[]): TextEdit[] {
  const taken: TextEdit[] = [];
  const overlaps = (a: TextEdit, b: TextEdit): boolean =>
    a.offset < b.offset + b.length && b.offset < a.offset + a.length
    || (a.length === 0 && b.length === 0 && a.offset === b.offset)
    || (a.length === 0 && a.offset > b.offset && a.offset < b.offset + b.length)
    || (b.length === 0 && b.offset > a.offset && b.offset < a.offset + a.length);
  for (const fix of fixes) {
    if (fix.edits.some((edit) => taken.some((other) => overlaps(edit, other)))) continue;
    taken.push(...fix.edits);
  }
  return taken.sort((a, b) => a.offset - b.offset);
}

export function workspaceEdit(document: vscode.TextDocument, edits: readonly TextEdit[]): vscode.WorkspaceEdit {
  const result = new vscode.WorkspaceEdit();
  result.set(document.uri, edits.map((edit) => toTextEdit(document, edit)));
  return result;
}
