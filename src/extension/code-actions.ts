// Quick fixes and "fix all" from the findings' own fix edits: the very edits the CLI's --fix applies.
import * as vscode from 'vscode';
import type { Finding, Fix } from '../lint';
import { FIX_PASSES, nonOverlapping } from '../model/edits';
import { SOURCE, ruleIdOf } from './diagnostics';
import { acceptActions } from './accept-finding';
import { toRange, workspaceEdit } from './edits';
import type { Linting } from './linting';

export const FIX_ALL_KIND = vscode.CodeActionKind.SourceFixAll.append('cachewright');

const sameRange = (a: vscode.Range, b: vscode.Range): boolean => a.isEqual(b);

/** Fixes of every active finding that can be applied together in one pass. */
export function fixAllEdits(findings: readonly Finding[]): { fixes: Fix[]; deferred: number } {
  const fixes = findings.flatMap((f) => (f.fix && !f.accepted ? [f.fix] : []));
  const { chosen, deferred } = nonOverlapping(fixes);
  return { fixes: chosen, deferred: deferred.length };
}

export class CachewrightCodeActions implements vscode.CodeActionProvider {
  static readonly kinds = [vscode.CodeActionKind.QuickFix, FIX_ALL_KIND];

  constructor(private readonly linting: Linting) {}

  provideCodeActions(document: vscode.TextDocument, range: vscode.Range, context: vscode.CodeActionContext): vscode.CodeAction[] {
    if (!this.linting.isDefinition(document)) return [];
    const result = this.linting.fresh(document);
    if (!result) return [];
    const actions: vscode.CodeAction[] = [];
    const wantsFixAll = context.only?.contains(FIX_ALL_KIND) || context.only?.intersects(FIX_ALL_KIND);
    if (!context.only || context.only.intersects(vscode.CodeActionKind.QuickFix)) {
      const ours = context.diagnostics.filter((d) => d.source === SOURCE);
      for (const finding of result.report.findings) {
        if (finding.accepted || (!finding.fix && !finding.alternatives)) continue;
        const at = toRange(finding.range);
        const diagnostic = ours.find((d) => ruleIdOf(d) === finding.rule && sameRange(d.range, at));
        if (!diagnostic && !at.intersection(range)) continue;
        // The fix first (preferred: what --fix applies), then the others offered beside it, such as
        // full coverage beside the smallest cache that reaches the target on a measured trace, or
        // instead of one (removing a stale accept comment, which --fix leaves to a person).
        const offered = finding.fix ? [finding.fix, ...(finding.alternatives ?? [])] : (finding.alternatives ?? []);
        for (const [index, fix] of offered.entries()) {
          const action = new vscode.CodeAction(fix.title, vscode.CodeActionKind.QuickFix);
          action.edit = workspaceEdit(document, fix.edits);
          if (diagnostic) action.diagnostics = [diagnostic];
          action.isPreferred = finding.fix !== undefined && index === 0;
          actions.push(action);
        }
      }
      // After the fixes: accepting a finding is the reviewer's call, never the preferred action.
      actions.push(...acceptActions(this.linting, document, (finding) => {
        const at = toRange(finding.range);
        return ours.find((d) => ruleIdOf(d) === finding.rule && sameRange(d.range, at)) ?? (at.intersection(range) ? undefined : false);
      }));
    }
    if (!context.only || wantsFixAll || context.only.contains(vscode.CodeActionKind.Source)) {
      const { fixes } = fixAllEdits(result.report.findings);
      if (fixes.length > 0) {
        const action = new vscode.CodeAction(`cachewright: apply ${fixes.length} fix${fixes.length > 1 ? 'es' : ''} in this file`, FIX_ALL_KIND);
        action.edit = workspaceEdit(document, fixes.flatMap((f) => f.edits));
        actions.push(action);
      }
    }
    return actions;
  }
}

/**
 * The "fix all" command: applies a pass of compatible fixes, re-lints, and repeats while fixes that
 * overlapped an earlier one remain (a few passes at most). Returns how many fixes were applied.
 */
export async function fixAllInDocument(linting: Linting, document: vscode.TextDocument): Promise<number> {
  let applied = 0;
  for (let pass = 0; pass < FIX_PASSES; pass++) {
    const result = linting.fresh(document);
    if (!result) break;
    const { fixes, deferred } = fixAllEdits(result.report.findings);
    if (fixes.length === 0) break;
    const ok = await vscode.workspace.applyEdit(workspaceEdit(document, fixes.flatMap((f) => f.edits)));
    if (!ok) break;
    applied += fixes.length;
    if (deferred === 0) break;
  }
  return applied;
}
