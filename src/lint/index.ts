// The one orchestrator's entry: a definition's text and its mapping in, the report out. The CLI,
// the editor and the tests all call lintDocument (or LintSession, which gives the same report);
// nothing here reads files or knows a front end.
import { prepareDocument, type PreparedDocument } from './documents';
import { lintPreparedUnits } from './lint';
import type { Mapping } from '../model/mapping';
import type { LintOptions, SourceFile } from './prepare';
import type { FileReport } from './report';

export type { Acceptance, Fix, Severity, SourceRange } from '../core/results';
export type { Mapping, MappingProblem } from '../model/mapping';
export { RULES, RULE_IDS, ruleById, ruleOf, isRuleId, type RuleId } from '../rules';
export { oversizedFileReport, prepareDocument, type PreparedDocument } from './documents';
export { loadMapping, type LintOptions, type SourceFile } from './prepare';
export type { DiskReport, FileReport, LintFinding as Finding, MachineReport } from './report';
export { LintSession } from './session';
export { acceptCommentEdit } from './accept-comment';
export { staleAcceptEntries, type StaleAcceptEntry } from './acceptance';
export { HostPassMemo, runHostPass, hostReports, lintHosts, type HostReport, type WorkspaceFile } from './hosts';
export type { HostLoad } from '../core/host-load';

/** Lints one definition file. Never throws for any text. */
export function lintDocument(file: SourceFile, mapping: Mapping, options: LintOptions = {}): FileReport {
  return lintPrepared(prepareDocument(file, mapping), options);
}

/** Lints a definition read by prepareDocument (the caller reads the image files it names in between). */
export function lintPrepared(prepared: PreparedDocument, options: LintOptions = {}): FileReport {
  return lintPreparedUnits(prepared, options).report;
}
