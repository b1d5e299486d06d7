// `cachewright lint` for people: findings grouped by file, one line each that terminals and editors
// turn into a link (`path:line:col`), a hint under each fixable one, and one closing summary.
// Accepted findings are not shown; the summary counts them.
import { CAUTIONS } from '../core/cautions';
import type { Finding } from '../lint';
import { displayPath } from './lint-discovery';
import { baselineOf, shownFindings, summarize, type LintRun, type LintSummary } from './lint-results';
import type { KnownEntry } from '../review/known';

const plural = (count: number, one: string, many = `${one}s`) => `${count} ${count === 1 ? one : many}`;

function padEnd(text: string, width: number): string {
  return text.length >= width ? text : text + ' '.repeat(width - text.length);
}

/**
 * One closing line: what was checked, what is wrong, what --fix would change (or did), what was
 * accepted. e.g. `2 files, 6 qcow2 disks: 3 errors, 8 warnings; --fix can settle 4; 2 accepted with a reason.`
 */
export function summaryLine(summary: LintSummary, run: Pick<LintRun, 'fix'>): string {
  const checked = `${plural(summary.files, 'file')}, ${plural(summary.disks, 'qcow2 disk')}`;
  const wrong = [plural(summary.errors, 'error'), plural(summary.warnings, 'warning')];
  if (summary.infos > 0) wrong.push(`${summary.infos} info`);
  const parts = [`${checked}: ${wrong.join(', ')}`];
  if (run.fix && summary.fixed > 0) parts.push(`--fix settled ${summary.fixed}`);
  if (summary.fixable > 0) parts.push(run.fix ? `${summary.fixable} fixable still open` : `--fix can settle ${summary.fixable}`);
  if (summary.accepted > 0) parts.push(`${summary.accepted} accepted with a reason`);
  if (summary.known > 0) parts.push(`${summary.known} already known, not counted`);
  if (summary.knownGone > 0) parts.push(`${summary.knownGone} known no longer found`);
  if (summary.failed > 0) parts.push(`${plural(summary.failed, 'file')} could not be read`);
  return `${parts.join('; ')}.`;
}

function goneLine(entry: KnownEntry): string {
  const subject = entry.host !== undefined ? `host ${entry.host}` : [entry.machine, entry.disk].filter((p) => p !== undefined).join(' / ');
  return `  ${entry.file}  ${entry.rule}${subject ? `  ${subject}` : ''}${entry.field ? `  ${entry.field}` : ''}`;
}

export function renderLintText(run: LintRun): string {
  const out: string[] = [];
  for (const file of run.files) {
    if (!file.report) continue;
    // Known findings are the repository's old debt: only new ones are listed.
    const findings = shownFindings(run, file.report).filter((f) => !f.accepted && baselineOf(run, f) !== 'unchanged');
    if (findings.length === 0) continue;
    const path = displayPath(file.path, run.cwd);
    const place = (f: Finding) => `${path}:${f.range.line}:${f.range.column}`;
    const placeWidth = Math.max(...findings.map((f) => place(f).length));
    const ruleWidth = Math.max(...findings.map((f) => f.rule.length));
    if (out.length > 0) out.push('');
    for (const finding of findings) {
      out.push(`${padEnd(place(finding), placeWidth)}  ${padEnd(finding.severity, 7)}  ${padEnd(finding.rule, ruleWidth)}  ${finding.message}`);
      for (const related of finding.related ?? []) out.push(`    see ${related.file !== undefined ? displayPath(related.file, run.cwd) : path}:${related.range.line}:${related.range.column}: ${related.message}`);
      if (finding.fix && finding.fix.edits.length > 0) out.push(`    fix: ${finding.fix.title}`);
      // "or" beside a fix; alone, an alternative is something to do by hand (--fix never applies it)
      const hasFix = finding.fix !== undefined && finding.fix.edits.length > 0;
      for (const other of finding.alternatives ?? []) out.push(`    ${hasFix ? 'or: ' : 'try:'} ${other.title}`);
    }
  }
  if (out.length > 0) out.push('');
  if (run.known && run.known.gone.length > 0) out.push('Known findings no longer found (they can go from the known-findings file):', ...run.known.gone.map(goneLine), '');
  const summary = summarize(run);
  out.push(summaryLine(summary, run));
  // Changed settings reach running machines only through the user's own rollout: say so.
  if (run.fix && summary.fixed > 0) out.push('', 'Before rolling the changed files out:', ...[CAUTIONS.reopen, CAUTIONS.hostMemory, CAUTIONS.review].map((c) => `  - ${c}`));
  return `${out.join('\n')}\n`;
}
