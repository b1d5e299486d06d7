// Accepting findings: an accept comment above a disk or machine, or an entry of the mapping file's
// accept list, marks the findings under it as reviewed. Which of the two accepted a finding is
// decided here, once, and carried in the report.
import type { MachineSpec } from '../model/disks';
import { pointerWithin } from '../model/jsonpath';
import { readSuppressions } from '../model/suppressions';
import { RULE_IDS, ruleOf } from '../rules';
import type { FileContext } from './prepare';
import type { LintFinding } from './report';

const KNOWN_RULES: ReadonlySet<string> = new Set(RULE_IDS);

/** An accept comment on a machine or on its host line, kept for the host rules that run later. */
export interface HostAcceptance {
  rules: string[];
  reason: string;
}

/**
 * Marks the accepted findings in place and adds the findings about the accept comments themselves
 * (which the mapping file's list can accept in turn). Returns, by machine pointer, the comments on
 * each machine or its host line: the host's findings come after every file is linted.
 */
export function applyAcceptances(context: FileContext, machines: readonly MachineSpec[], findings: LintFinding[]): Map<string, HostAcceptance[]> {
  const { document, mapping } = context;
  const own = findings;
  const rule = ruleOf('invalid-suppression');
  const { comments, problems } = readSuppressions(document, KNOWN_RULES);
  for (const problem of problems) context.add(own, rule, { message: problem.message, pointer: '', range: problem.range });
  const scopes: { pointer: string; line: number; machine?: string }[] = [];
  const forHosts = new Map<string, HostAcceptance[]>();
  for (const machine of machines) {
    if (machine.path.length > 0) scopes.push({ pointer: machine.pointer, line: machine.range.line, machine: machine.pointer });
    if (machine.host) scopes.push({ pointer: machine.host.pointer, line: machine.host.range.line, machine: machine.pointer });
    for (const disk of machine.disks) scopes.push({ pointer: disk.pointer, line: disk.range.line });
  }
  for (const comment of comments) {
    const scope = scopes.filter((s) => s.line === comment.targetLine).sort((a, b) => a.pointer.length - b.pointer.length)[0];
    if (!scope) {
      context.add(own, rule, { message: 'this accept comment is not above a disk or machine, so it accepts nothing', pointer: '', range: comment.range });
      continue;
    }
    if (scope.machine !== undefined) forHosts.set(scope.machine, [...(forHosts.get(scope.machine) ?? []), { rules: comment.rules, reason: comment.reason }]);
    for (const finding of findings) {
      if (!finding.accepted && comment.rules.includes(finding.rule) && pointerWithin(finding.pointer, scope.pointer)) finding.accepted = { reason: comment.reason, from: 'comment' };
    }
  }
  for (const entry of mapping.accept) {
    if (entry.file !== undefined && entry.file !== document.path) continue;
    for (const finding of findings) {
      if (!finding.accepted && finding.rule === entry.rule && pointerWithin(finding.pointer, entry.pointer)) finding.accepted = { reason: entry.reason, from: 'mapping' };
    }
  }
  return forHosts;
}
