// Suppression comments in YAML: `# cachewright-accept RULE[, RULE...]: REASON` on the line above a disk
// or machine (or at the end of its first line) silences those rules for it. A reason is required:
// suppressions are reviewed exceptions, and the reason travels into JSON and SARIF output.
import type { SourceRange } from '../core/results';
import { visit } from './yaml-functions';
import type { DefinitionDocument } from './document';

export interface SuppressionComment {
  rules: string[];
  reason: string;
  /** The comment's own place, for problems with it. */
  range: SourceRange;
  /** The 1-based line the suppression applies to. */
  targetLine: number;
}

/** What is wrong with an accept comment; the invalid-suppression rule's wording says it. */
export interface SuppressionProblem {
  kind: 'no-rule' | 'unknown-rules' | 'no-reason';
  /** The unknown rules (unknown-rules) or the rules named (no-reason); empty for no-rule. */
  rules: string[];
  range: SourceRange;
}

const MARKER = /#\s*cachewright-accept\b(.*)$/;

/** Whether an offset falls inside a scalar value (a quoted string can hold a "#"). */
function scalarRanges(document: DefinitionDocument): (offset: number) => boolean {
  const ranges: [number, number][] = [];
  visit(document.tree, {
    Scalar(_key, node) {
      if (node.range) ranges.push([node.range[0], node.range[1]]);
    },
  });
  return (offset) => ranges.some(([start, end]) => offset >= start && offset < end);
}

export function readSuppressions(document: DefinitionDocument, knownRules: ReadonlySet<string>): { comments: SuppressionComment[]; problems: SuppressionProblem[] } {
  const comments: SuppressionComment[] = [];
  const problems: SuppressionProblem[] = [];
  if (document.format !== 'yaml' || !document.text.includes('cachewright-accept')) return { comments, problems };
  const { lines } = document;
  const inScalar = scalarRanges(document);
  for (let line = 1; line <= lines.lineCount; line++) {
    const text = lines.lineText(line);
    const match = MARKER.exec(text);
    if (!match) continue;
    const start = lines.lineStart(line) + (match.index ?? 0);
    if (inScalar(start)) continue; // "# cachewright-accept" inside a quoted value is data, not a comment
    const range = lines.range(start, lines.lineStart(line) + text.length);
    const body = (match[1] ?? '').trim();
    const colon = body.indexOf(':');
    const ruleText = colon === -1 ? body : body.slice(0, colon);
    const reason = colon === -1 ? '' : body.slice(colon + 1).trim();
    const rules = ruleText.split(/[\s,]+/).filter(Boolean);
    if (rules.length === 0) {
      problems.push({ kind: 'no-rule', rules, range });
      continue;
    }
    const unknown = rules.filter((r) => !knownRules.has(r));
    if (unknown.length > 0) {
      problems.push({ kind: 'unknown-rules', rules: unknown, range });
      continue;
    }
    if (!reason) {
      problems.push({ kind: 'no-reason', rules, range });
      continue;
    }
    // A comment alone on its line applies to the next line with content; a trailing one to its own line.
    const standalone = text.slice(0, match.index).trim() === '';
    let target = line;
    if (standalone) {
      target = line + 1;
      while (target <= lines.lineCount && /^\s*(#.*)?$/.test(lines.lineText(target))) target++;
    }
    comments.push({ rules, reason, range, targetLine: target });
  }
  return { comments, problems };
}
