// Accepting findings: an accept comment above a disk, machine or value, or an entry of the mapping file's
// accept list, marks the findings under it as reviewed. Which of the two accepted a finding is
// decided here, once, and carried in the report.
import * as nodePath from 'node:path';
import type { DiskSpec, Located, MachineSpec } from '../model/disks';
import { pointerWithin } from '../model/jsonpath';
import { readSuppressions, type SuppressionProblem } from '../model/suppressions';
import { RULE_IDS, ruleById, ruleOf, say, wordingOf, type RuleId } from '../rules';
import { removeCommentEdit } from './accept-comment';
import type { FileContext } from './prepare';
import type { Mapping } from '../model/mapping';
import type { SourceRange } from '../core/results';
import type { LintFinding } from './report';

const KNOWN_RULES: ReadonlySet<string> = new Set(RULE_IDS);
const WORDING = wordingOf('invalid-suppression');

/** What is wrong with an accept comment, in the invalid-suppression rule's wording. */
function suppressionProblemText(problem: SuppressionProblem): string {
  const rules = problem.rules.join(', ');
  if (problem.kind === 'no-rule') return say(WORDING, 'noRule');
  if (problem.kind === 'no-reason') return say(WORDING, 'noReason', { rules });
  return problem.rules.length > 1 ? say(WORDING, 'unknownRules', { rules }) : say(WORDING, 'unknownRule', { rules });
}

/** A line an accept comment can stand above: a disk's or machine's first line, a host line, or a value's line. */
interface Scope {
  pointer: string;
  line: number;
  /** The machine whose first line or host line this is (its comments also reach the host's findings). */
  machine?: string;
  value?: true;
  host?: true;
  /** The disks whose findings the line's comment can accept: what decides whether they could appear. */
  disks: readonly DiskSpec[];
}

/**
 * Rules whose findings follow from more than the definition's text: the image files, the traces, or
 * every file of the run (a host's budget). Whether such a finding is there depends on what the run
 * read, so a comment naming one of them is never called stale.
 */
const NEEDS_MORE_THAN_THE_TEXT: ReadonlySet<RuleId> = new Set<RuleId>(['image-mismatch', 'image-unreadable', 'backing-chain-cycle', 'l2-cache-above-working-set', 'trace-unreadable', 'host-cache-budget']);

/**
 * Whether a disk's findings follow from the definition alone: no trace, no backing file named by
 * path, and no image file, or one the caller read whole (with --no-images, before the editor has
 * read it, or when it cannot be read, its chain and so its sizing findings are not yet known).
 */
function decidedByText(context: FileContext, disk: DiskSpec): boolean {
  if (disk.values.trace) return false;
  if (disk.backing && 'file' in disk.backing) return false;
  const image = disk.values.image;
  if (image) {
    // An image that could not be used (missing, unreadable, a backing layer lost) leaves the disk sized
    // from less than it really is: once the image reads, findings may appear.
    const facts = context.images?.(nodePath.resolve(nodePath.dirname(context.document.path), image.value));
    if (!facts || facts.problem) return false;
  }
  return !disk.backing || decidedByText(context, disk.backing.disk);
}

/**
 * Findings that stop the sizing rules from judging a disk (an unreadable value, a cache split the
 * driver refuses): while one stands, the findings a comment names may only be waiting for its fix.
 */
const HOLDS_BACK_SIZING: ReadonlySet<RuleId> = new Set<RuleId>(['invalid-value', 'cache-options-conflict']);

/**
 * A comment that accepts nothing is stale (the value it was written for changed, or the disk moved)
 * only when nothing the run left unread, and no value still to be corrected, could have produced
 * the findings it names.
 */
function canJudgeStale(context: FileContext, rules: readonly string[], scope: Scope, findings: readonly LintFinding[]): boolean {
  if (scope.host) return false;
  for (const id of rules) {
    const rule = ruleById(id);
    if (!rule || NEEDS_MORE_THAN_THE_TEXT.has(rule.id) || context.severityOf(rule) === 'off') return false;
  }
  const heldBack = (finding: LintFinding) => HOLDS_BACK_SIZING.has(finding.rule) && (pointerWithin(finding.pointer, scope.pointer) || scope.disks.some((disk) => pointerWithin(finding.pointer, disk.pointer)));
  return scope.disks.every((disk) => decidedByText(context, disk)) && !findings.some(heldBack);
}

/**
 * A value's line, unless the value is reached through a YAML alias: its range is then the anchor's,
 * on another disk's line, where a comment must not reach this disk's findings.
 */
function pushValueScope(scopes: Scope[], value: Located<unknown>, disks: readonly DiskSpec[]): void {
  if (!value.viaAlias) scopes.push({ pointer: value.pointer, line: value.range.line, value: true, disks });
}

/** A disk's first line and the lines of its values, and the same for a backing disk written inline. */
function diskScopes(disk: DiskSpec, scopes: Scope[]): void {
  const disks = [disk];
  scopes.push({ pointer: disk.pointer, line: disk.range.line, disks });
  for (const value of Object.values(disk.values)) if (value) pushValueScope(scopes, value, disks);
  if (disk.backing && 'disk' in disk.backing) diskScopes(disk.backing.disk, scopes);
}

/**
 * How one entry of the mapping file's accept list fared in a file it reaches: whether it accepted a
 * finding, and whether the file could tell that it accepts nothing (see canJudgeStale). Whether an
 * entry is stale is decided over the whole run (staleAcceptEntries), since one entry can reach
 * every file.
 */
export interface AcceptEntryUse {
  /** The entry's index in the mapping file's accept list. */
  entry: number;
  matched: boolean;
  judged: boolean;
}

/**
 * The disks (with their inline backing disks) whose findings an entry at `pointer` depends on: those
 * it reaches or lies within, and every disk of a machine when it points at the machine's own part
 * (its memory, say, where the machine's cache budget is reported, summed over all its disks).
 */
function disksAt(machines: readonly MachineSpec[], pointer: string): DiskSpec[] {
  const out: DiskSpec[] = [];
  const withBacking = (disk: DiskSpec): void => {
    out.push(disk);
    if (disk.backing && 'disk' in disk.backing) withBacking(disk.backing.disk);
  };
  for (const machine of machines) {
    const inMachine = pointerWithin(pointer, machine.pointer);
    const inDisk = machine.disks.some((disk) => pointerWithin(pointer, disk.pointer));
    for (const disk of machine.disks) {
      if ((inMachine && !inDisk) || pointerWithin(disk.pointer, pointer) || pointerWithin(pointer, disk.pointer)) withBacking(disk);
    }
  }
  return out;
}

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
 * come after every file is linted; and how the accept list's entries fared in this file.
 */
export function applyAcceptances(context: FileContext, machines: readonly MachineSpec[], findings: readonly LintFinding[]): { findings: LintFinding[]; hostAcceptances: Map<string, HostAcceptance[]>; acceptEntries: AcceptEntryUse[] } {
  const { document, mapping } = context;
  const out = [...findings];
  const rule = ruleOf('invalid-suppression');
  const { comments, problems } = readSuppressions(document, KNOWN_RULES);
  for (const problem of problems) context.add(out, rule, { message: suppressionProblemText(problem), pointer: '', range: problem.range });
  /** Marks the matching findings not yet accepted; returns how many match, accepted before or not. */
  const accept = (matches: (finding: LintFinding) => boolean, accepted: NonNullable<LintFinding['accepted']>): number => {
    let matched = 0;
    out.forEach((finding, index) => {
      if (!matches(finding)) return;
      matched++;
      if (!finding.accepted) out[index] = { ...finding, accepted };
    });
    return matched;
  };
  const scopes: Scope[] = [];
  const hostAcceptances = new Map<string, HostAcceptance[]>();
  if (comments.length > 0) {
    for (const machine of machines) {
      if (machine.path.length > 0) scopes.push({ pointer: machine.pointer, line: machine.range.line, machine: machine.pointer, disks: machine.disks });
      if (machine.host) scopes.push({ pointer: machine.host.pointer, line: machine.host.range.line, machine: machine.pointer, host: true, disks: machine.disks });
      if (machine.memory) pushValueScope(scopes, machine.memory, machine.disks);
      for (const disk of machine.disks) diskScopes(disk, scopes);
    }
  }
  for (const comment of comments) {
    const onLine = scopes.filter((s) => s.line === comment.targetLine).sort((a, b) => a.pointer.length - b.pointer.length);
    const scope = onLine[0];
    if (!scope) {
      context.add(out, rule, { message: say(WORDING, 'notAbove'), pointer: '', range: comment.range });
      continue;
    }
    if (scope.machine !== undefined) hostAcceptances.set(scope.machine, [...(hostAcceptances.get(scope.machine) ?? []), { rules: comment.rules, reason: comment.reason }]);
    // Above a line of values (no disk or machine starts there): every value written on that line.
    const covered = scope.value ? onLine.filter((s) => s.value) : [scope];
    const matched = accept((finding) => comment.rules.includes(finding.rule) && covered.some((s) => pointerWithin(finding.pointer, s.pointer)), { reason: comment.reason, from: 'comment' });
    if (matched === 0 && covered.every((s) => canJudgeStale(context, comment.rules, s, out))) {
      // Offered, never applied by --fix: the comment's reason is a reviewer's record, taken out by a person.
      const removal = { title: say(WORDING, 'removeComment'), edits: [removeCommentEdit(document.text, comment.range)] };
      context.add(out, rule, { message: say(WORDING, 'acceptsNothing', { rules: comment.rules.join(', ') }), pointer: '', range: comment.range, alternatives: [removal] });
    }
  }
  const acceptEntries: AcceptEntryUse[] = [];
  mapping.accept.forEach((entry, index) => {
    if (entry.file !== undefined && entry.file !== document.path) return;
    const matched = accept((finding) => finding.rule === entry.rule && pointerWithin(finding.pointer, entry.pointer), { reason: entry.reason, from: 'mapping' }) > 0;
    const judged = matched || canJudgeStale(context, [entry.rule], { pointer: entry.pointer, line: 0, disks: disksAt(machines, entry.pointer) }, out);
    acceptEntries.push({ entry: index, matched, judged });
  });
  return { findings: out, hostAcceptances, acceptEntries };
}

/** An entry of the mapping file's accept list that accepts nothing in any file it reaches. */
export interface StaleAcceptEntry {
  entry: number;
  rule: string;
  pointer: string;
  file?: string;
  range: SourceRange;
  /** False when the entry names a file the run did not lint (gone, renamed, or not included). */
  reached: boolean;
}

/** What the run-wide judgement reads of a file: its path and how the entries fared there. */
export interface AcceptEntriesOfFile {
  path: string;
  /** Absent when the file could not be read or parsed: nothing can be said of the entries it may hold. */
  acceptEntries?: readonly AcceptEntryUse[];
}

/**
 * The entries of the accept list that accept nothing anywhere: every file the run linted that an
 * entry reaches could tell, and none had a finding for it. Only a run over every file the mapping
 * includes can say so (`complete`); a file that did not parse leaves every entry that may reach it
 * undecided. An entry naming a file the run did not lint reaches nothing.
 */
export function staleAcceptEntries(files: readonly AcceptEntriesOfFile[], mapping: Pick<Mapping, 'accept'>, complete: boolean): StaleAcceptEntry[] {
  // Without a file, every entry would be "stale": the include globs are what is wrong, and said elsewhere.
  if (!complete || files.length === 0) return [];
  const stale: StaleAcceptEntry[] = [];
  mapping.accept.forEach((entry, index) => {
    const reached = files.filter((f) => entry.file === undefined || f.path === entry.file);
    const decided = reached.every((f) => f.acceptEntries?.some((use) => use.entry === index && use.judged && !use.matched));
    if (!decided) return;
    stale.push({ entry: index, rule: entry.rule, pointer: entry.pointer, ...(entry.file !== undefined ? { file: entry.file } : {}), range: entry.range, reached: reached.length > 0 });
  });
  return stale;
}
