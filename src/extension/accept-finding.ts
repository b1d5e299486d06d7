// "Accept ... with a reason": offered beside a finding's fixes, it asks for the reason a reviewer will
// read and writes the accept comment the engine computes (src/lint/accept-comment.ts) above the
// finding's disk, machine or host line. The comment goes through the user's own review like any
// other change to the definition.
import * as vscode from 'vscode';
import { acceptCommentEdit, type FileReport, type Finding } from '../lint';
import { workspaceEdit } from './edits';
import type { Linting } from './linting';

export const ACCEPT_FINDING_COMMAND = 'cachewright.acceptFinding';

/** Names one finding across edits (positions move, rule and JSON Pointer do not); `reason` skips the question. */
export interface AcceptRequest {
  uri: string;
  rule: string;
  pointer: string;
  host?: string;
  reason?: string;
}

const sameFinding = (finding: Finding, request: AcceptRequest): boolean =>
  finding.rule === request.rule && finding.pointer === request.pointer && finding.host === request.host;

/** The file's findings as the editor shows them: its own and the host findings placed in it. */
function shownFindings(linting: Linting, document: vscode.TextDocument): { findings: Finding[]; text: string; report: FileReport } | undefined {
  const result = linting.fresh(document);
  if (!result) return undefined;
  return { findings: [...result.report.findings, ...linting.hosts.findingsFor(document.uri, result.report)], text: result.text, report: result.report };
}

/**
 * The quick fixes that accept the unaccepted findings `wanted` picks (false: not this one; else the
 * diagnostic it answers, if shown), only where a comment can be written.
 */
export function acceptActions(linting: Linting, document: vscode.TextDocument, wanted: (finding: Finding) => vscode.Diagnostic | undefined | false): vscode.CodeAction[] {
  const shown = shownFindings(linting, document);
  if (!shown) return [];
  const actions: vscode.CodeAction[] = [];
  for (const finding of shown.findings) {
    if (finding.accepted) continue;
    const diagnostic = wanted(finding);
    if (diagnostic === false) continue;
    // Offered only where the comment can be written (YAML, a disk, machine or host line of its own).
    if (!acceptCommentEdit(shown.text, shown.report, finding, 'reason').ok) continue;
    const title = `Accept ${finding.rule} here with a reason...`;
    const action = new vscode.CodeAction(title, vscode.CodeActionKind.QuickFix);
    const request: AcceptRequest = { uri: document.uri.toString(), rule: finding.rule, pointer: finding.pointer, ...(finding.host !== undefined ? { host: finding.host } : {}) };
    action.command = { command: ACCEPT_FINDING_COMMAND, title, arguments: [request] };
    if (diagnostic) action.diagnostics = [diagnostic];
    actions.push(action);
  }
  return actions;
}

/** Asks for the reason (unless given) and writes the comment; says why when it cannot. */
export async function acceptFinding(linting: Linting, request: AcceptRequest): Promise<{ ok: boolean; message: string }> {
  const document = await vscode.workspace.openTextDocument(vscode.Uri.parse(request.uri));
  const reason = request.reason ?? (await vscode.window.showInputBox({
    title: `cachewright: accept ${request.rule}`,
    prompt: 'Why is this finding acceptable here? The reason is written into the comment and shown in every report.',
    validateInput: (value) => (value.trim() === '' ? 'A reason is required: it is what a reviewer reads.' : undefined),
  }));
  if (reason === undefined) return { ok: false, message: 'no reason given: nothing was written' };
  // Linted again now: the text may have changed while the question was open.
  const shown = shownFindings(linting, document);
  const finding = shown?.findings.find((f) => sameFinding(f, request));
  if (!shown || !finding) return told(`the ${request.rule} finding is no longer reported here: nothing was written`);
  const edit = acceptCommentEdit(shown.text, shown.report, finding, reason);
  if (!edit.ok) return told(edit.error);
  if (!(await vscode.workspace.applyEdit(workspaceEdit(document, [edit.value])))) return told('the editor refused the edit: nothing was written');
  return { ok: true, message: edit.value.text.trim() };
}

function told(message: string): { ok: false; message: string } {
  void vscode.window.showWarningMessage(`cachewright: ${message}.`);
  return { ok: false, message };
}
