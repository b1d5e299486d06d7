// Accepting findings: an accept comment above a disk or machine, or an entry of the mapping file's
// accept list, marks the findings under it as reviewed. Which of the two accepted a finding is
// decided here, once, and carried in the report.
import type { MachineSpec } from '../model/disks';
import { pointerWithin } from '../model/jsonpath';
import { readSuppressions } from '../model/suppressions';
import { RULE_IDS, ruleOf, say, wordingOf } from '../rules';
import type { FileContext } from './prepare';
import type { LintFinding } from './report';

const KNOWN_RULES: ReadonlySet<string> = new Set(RULE_IDS);

/** An accept comment on a machine or on its host line, kept for the host rules that run later. */
export interface HostAcceptance {
  rules: string[];
  reason: string;
}

/**
 * The findings with the accepted ones marked, followed by the findings about the accept comments
 * themselves (which the mapping file's list can accept in turn). The findings passed in are left as
 * they are (the editor session keeps them from one edit to the next): an accepted one is a copy.
 * Also, by machine pointer, the comments on each machine or its host line: the host's findings
 * come after every file is linted.
 */
export function applyAcceptances(context: FileContext, machines: readonly MachineSpec[], findings: readonly LintFinding[]): { findings: LintFinding[]; hostAcceptances: Map<string, HostAcceptance[]> } {
  const { document, mapping } = context;
  const out = [...findings];
  const rule = ruleOf('invalid-suppression');
  const { comments, problems } = readSuppressions(document, KNOWN_RULES);
  for (const problem of problems) context.add(out, rule, { message: problem.message, pointer: '', range: problem.range });
  const accept = (matches: (finding: LintFinding) => boolean, accepted: NonNullable<LintFinding['accepted']>): void => {
    out.forEach((finding, index) => {
      if (!finding.accepted && matches(finding)) out[index] = { ...finding, accepted };
    });
  };
  const scopes: { pointer: string; line: number; machine?: string }[] = [];
  const hostAcceptances = new Map<string, HostAcceptance[]>();
  if (comments.length > 0) {
    for (const machine of machines) {
      if (machine.path.length > 0) scopes.push({ pointer: machine.pointer, line: machine.range.line, machine: machine.pointer });
      if (machine.host) scopes.push({ pointer: machine.host.pointer, line: machine.host.range.line, machine: machine.pointer });
      for (const disk of machine.disks) scopes.push({ pointer: disk.pointer, line: disk.range.line });
    }
  }
  for (const comment of comments) {
    const scope = scopes.filter((s) => s.line === comment.targetLine).sort((a, b) => a.pointer.length - b.pointer.length)[0];
    if (!scope) {
      context.add(out, rule, { message: say(wordingOf('invalid-suppression'), 'notAbove'), pointer: '', range: comment.range });
      continue;
    }
    if (scope.machine !== undefined) hostAcceptances.set(scope.machine, [...(hostAcceptances.get(scope.machine) ?? []), { rules: comment.rules, reason: comment.reason }]);
    accept((finding) => comment.rules.includes(finding.rule) && pointerWithin(finding.pointer, scope.pointer), { reason: comment.reason, from: 'comment' });
  }
  for (const entry of mapping.accept) {
    if (entry.file !== undefined && entry.file !== document.path) continue;
    accept((finding) => finding.rule === entry.rule && pointerWithin(finding.pointer, entry.pointer), { reason: entry.reason, from: 'mapping' });
  }
  return { findings: out, hostAcceptances };
}
