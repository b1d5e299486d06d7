// Findings to the editor's diagnostics: the rule id is the code, linked to the rule's docs page;
// related locations carry the other places a finding spans (a machine's budget names its disks, a
// host's budget the machines on it, in whichever files they are).
import * as vscode from 'vscode';
import type { Finding, MappingProblem } from '../lint';
import { ruleById } from '../rules';
import { toRange } from './edits';

export const SOURCE = 'cachewright';
/** The code of a mapping file's own problems, which no rule reports. */
export const MAPPING_PROBLEM_CODE = 'mapping-file';

const SEVERITY: Record<Finding['severity'], vscode.DiagnosticSeverity> = {
  error: vscode.DiagnosticSeverity.Error,
  warning: vscode.DiagnosticSeverity.Warning,
  info: vscode.DiagnosticSeverity.Information,
};

export function docsUri(extensionUri: vscode.Uri, rule: string): vscode.Uri | undefined {
  const page = ruleById(rule)?.docs;
  return page ? vscode.Uri.joinPath(extensionUri, ...page.split('/')) : undefined;
}

export function findingDiagnostic(extensionUri: vscode.Uri, uri: vscode.Uri, finding: Finding): vscode.Diagnostic {
  const diagnostic = new vscode.Diagnostic(toRange(finding.range), finding.message, SEVERITY[finding.severity]);
  diagnostic.source = SOURCE;
  const target = docsUri(extensionUri, finding.rule);
  diagnostic.code = target ? { value: finding.rule, target } : finding.rule;
  if (finding.related && finding.related.length > 0) {
    diagnostic.relatedInformation = finding.related.map((related) =>
      new vscode.DiagnosticRelatedInformation(new vscode.Location(related.file !== undefined ? vscode.Uri.file(related.file) : uri, toRange(related.range)), related.message));
  }
  return diagnostic;
}

/** Suppressed findings are reviewed exceptions: the panel lists them, the editor does not flag them. */
export function fileDiagnostics(extensionUri: vscode.Uri, uri: vscode.Uri, findings: readonly Finding[]): vscode.Diagnostic[] {
  return findings.filter((f) => !f.accepted).map((f) => findingDiagnostic(extensionUri, uri, f));
}

export function mappingDiagnostics(problems: readonly MappingProblem[]): vscode.Diagnostic[] {
  return problems.map((problem) => {
    const diagnostic = new vscode.Diagnostic(toRange(problem.range), problem.message, vscode.DiagnosticSeverity.Error);
    diagnostic.source = SOURCE;
    diagnostic.code = MAPPING_PROBLEM_CODE;
    return diagnostic;
  });
}

/** The rule id a diagnostic of ours carries as its code. */
export function ruleIdOf(diagnostic: vscode.Diagnostic): string | undefined {
  const code = diagnostic.code;
  if (typeof code === 'string') return code;
  if (code && typeof code === 'object') return String(code.value);
  return undefined;
}
