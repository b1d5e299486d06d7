// The accept comment a reviewer writes for one finding (docs/mapping-file.md): a line
// `# cachewright-accept RULE: REASON` directly above the first line of the disk or machine the
// finding belongs to, or above the host line for a finding about a whole host. Computed here, from
// the report, so the editor's "accept" action writes exactly what the linter then reads back.
import { fail, ok, type Finding, type Outcome, type SourceRange, type TextEdit } from '../core/results';
import { formatOf } from '../model/document';
import { pointerWithin } from '../model/jsonpath';
import type { FileReport } from './report';

/** Where a comment would go: the line it is written above, and the scope the linter gives it there. */
interface Scope {
  pointer: string;
  /** 1-based line of the disk's or machine's first line, or of the host value. */
  line: number;
  offset: number;
}

/**
 * The disk, machine and host lines an accept comment can stand above, in the order
 * src/lint/acceptance.ts lists them. The reader also takes value lines, but a value's pointer is
 * longer than its disk's, so a value never takes a comment written above a disk's first line.
 */
function scopesOf(report: FileReport): Scope[] {
  const scopes: Scope[] = [];
  for (const machine of report.machines) {
    // A machine that is the whole document has no line of its own to write above.
    if (machine.pointer !== '') scopes.push({ pointer: machine.pointer, line: machine.range.line, offset: machine.range.offset });
    if (machine.hostPointer !== undefined && machine.hostRange) scopes.push({ pointer: machine.hostPointer, line: machine.hostRange.line, offset: machine.hostRange.offset });
    for (const index of machine.disks) {
      const disk = report.disks[index];
      if (disk) scopes.push({ pointer: disk.pointer, line: disk.range.line, offset: disk.range.offset });
    }
  }
  return scopes;
}

/** The scope a comment accepting `finding` goes above: its disk, else its machine; for a host finding, the host line. */
function scopeFor(scopes: readonly Scope[], finding: Finding): Scope | undefined {
  if (finding.host !== undefined) return scopes.find((s) => s.pointer === finding.pointer);
  let best: Scope | undefined;
  for (const scope of scopes) {
    if (scope.pointer !== '' && pointerWithin(finding.pointer, scope.pointer) && (!best || scope.pointer.length > best.pointer.length)) best = scope;
  }
  return best;
}

/**
 * The edit that inserts an accept comment for `finding` with `reason` into `text` (the text `report`
 * was linted from), or why none can be written: JSON has no comments, a finding of the file itself
 * has no disk or machine to stand above, and a disk sharing its first line with another would let
 * the comment accept the other's findings.
 */
export function acceptCommentEdit(text: string, report: FileReport, finding: Finding, reason: string): Outcome<TextEdit> {
  const why = reason.replace(/\s+/g, ' ').trim();
  if (why === '') return fail('an accept comment needs a reason: it travels into the reports and is what a reviewer reads');
  if (formatOf(report.path) === 'json') return fail('JSON has no comments: accept this finding in the mapping file\'s accept list');
  const scopes = scopesOf(report);
  const scope = scopeFor(scopes, finding);
  if (!scope) return fail('this finding belongs to no disk or machine with a line of its own: accept it in the mapping file\'s accept list');
  // The linter gives a comment to the shortest pointer that starts on the line below it.
  const taker = scopes.filter((s) => s.line === scope.line).sort((a, b) => a.pointer.length - b.pointer.length)[0];
  if (taker?.pointer !== scope.pointer) return fail('this disk starts on the same line as another part of the definition, so a comment above it would accept that too: accept it in the mapping file\'s accept list');
  const lineStart = text.lastIndexOf('\n', scope.offset - 1) + 1;
  const indent = /^[ \t]*/.exec(text.slice(lineStart, scope.offset))?.[0] ?? '';
  const lineEnd = text.indexOf('\n', scope.offset);
  const eol = lineEnd > 0 && text[lineEnd - 1] === '\r' ? '\r\n' : '\n';
  return ok({ offset: lineStart, length: 0, text: `${indent}# cachewright-accept ${finding.rule}: ${why}${eol}` });
}

/**
 * The edit that takes an accept comment out of `text`: the whole line when the comment stands alone
 * on it (with its line break), else the comment and the blanks before it, leaving the line's content.
 */
export function removeCommentEdit(text: string, range: Pick<SourceRange, 'offset' | 'length'>): TextEdit {
  // Lines end in LF, CRLF or a lone CR, as the line index counts them.
  const lineStart = Math.max(text.lastIndexOf('\n', range.offset - 1), text.lastIndexOf('\r', range.offset - 1)) + 1;
  const before = text.slice(lineStart, range.offset);
  if (before.trim() === '') {
    const lineBreaks = /\r\n|\r|\n/g;
    lineBreaks.lastIndex = range.offset + range.length;
    const lineBreak = lineBreaks.exec(text);
    const end = lineBreak ? lineBreak.index + lineBreak[0].length : text.length;
    return { offset: lineStart, length: end - lineStart, text: '' };
  }
  const blanks = before.length - before.trimEnd().length;
  return { offset: range.offset - blanks, length: range.length + blanks, text: '' };
}
