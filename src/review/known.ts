// Known findings: a file of the findings a repository already had when it adopted the linter, so
// only new ones fail a build (docs/cli.md). The file is meant to be read in a diff: sorted,
// one entry per finding, identities only (no lines, no messages whose numbers drift).
import { array, literal, object, string } from 'zod';

// Named imports: the library's `z` namespace would keep all its message locales in the bundles.
const z = { array, literal, object, string };
import type { Finding } from '../core/results';
import { fail, ok, type Outcome } from '../core/results';
import { nodeAt, rangeOfNode, readDefinition } from '../model/document';
import type { PathSegment } from '../model/jsonpath';
import { identify, pairUp, type FindingSubject, type IdentifiedFinding } from './identity';
import type { ReviewedFile } from './types';

export interface KnownEntry extends FindingSubject {
  fingerprint: string;
}

export interface KnownFile {
  tool: 'cachewright';
  known: KnownEntry[];
}

export type BaselineState = 'new' | 'unchanged';

export interface KnownComparison {
  /** The state of every unaccepted finding of the run. */
  stateOf: ReadonlyMap<Finding, BaselineState>;
  /** Findings the current run matched to a known one, by their identity. */
  unchanged: IdentifiedFinding[];
  new: IdentifiedFinding[];
  /** Known findings the run no longer has: the file can be trimmed of these. */
  gone: KnownEntry[];
}

const text = (value: string | undefined) => value ?? '';
const compareText = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);

/** The order of the file: by file, machine, disk, rule, then what is left, so the output is stable. */
export function byEntry(a: KnownEntry, b: KnownEntry): number {
  return (
    compareText(a.file, b.file) || compareText(text(a.machine), text(b.machine)) || compareText(text(a.disk), text(b.disk)) ||
    compareText(a.rule, b.rule) || compareText(text(a.host), text(b.host)) || compareText(a.field, b.field) || compareText(text(a.value), text(b.value)) || compareText(a.fingerprint, b.fingerprint)
  );
}

export const entryOf = (item: IdentifiedFinding): KnownEntry => ({ ...item.subject, fingerprint: item.fingerprint });

export function recordKnown(files: readonly ReviewedFile[]): KnownFile {
  return { tool: 'cachewright', known: identify(files).map(entryOf).sort(byEntry) };
}

/** Keys in a fixed order, one entry per line: a reviewer sees exactly which findings came or went. */
export function renderKnownFile(file: KnownFile): string {
  const keys = ['rule', 'file', 'machine', 'disk', 'host', 'field', 'value', 'fingerprint'] as const;
  const lines = file.known.map((entry) => {
    const ordered: Record<string, string> = {};
    for (const key of keys) if (entry[key] !== undefined) ordered[key] = entry[key] as string;
    return `    ${JSON.stringify(ordered)}`;
  });
  return `{\n  "tool": "cachewright",\n  "known": [${lines.length > 0 ? `\n${lines.join(',\n')}\n  ` : ''}]\n}\n`;
}

const entrySchema = z.object({
  rule: z.string().min(1),
  file: z.string(),
  machine: z.string().optional(),
  disk: z.string().optional(),
  host: z.string().optional(),
  field: z.string(),
  value: z.string().optional(),
  fingerprint: z.string().regex(/^[0-9a-f]{8,64}$/, 'a fingerprint is a string of hex digits'),
});
const fileSchema = z.object({ tool: z.literal('cachewright'), known: z.array(entrySchema) });

/** Reads a known-findings file; a problem comes back as "line:column: message". */
export function readKnownFile(path: string, source: string): Outcome<KnownEntry[]> {
  const read = readDefinition(path.endsWith('.json') ? path : `${path}.json`, source);
  if (!read.document) {
    const problem = read.problems[0];
    return fail(problem ? `${problem.range.line}:${problem.range.column}: ${problem.message}` : 'not a known-findings file');
  }
  const document = read.document;
  const parsed = fileSchema.safeParse(document.data);
  if (parsed.success) return ok(parsed.data.known);
  const issue = parsed.error.issues[0];
  const path_ = (issue?.path ?? []) as PathSegment[];
  let found = nodeAt(document, path_);
  for (let depth = path_.length - 1; !found && depth >= 0; depth--) found = nodeAt(document, path_.slice(0, depth));
  const range = found ? rangeOfNode(document, found.node) : document.lines.range(0, 0);
  const where = path_.length > 0 ? ` at ${path_.join('.')}` : '';
  return fail(`${range.line}:${range.column}: not a known-findings file${where}: ${issue?.message ?? 'unexpected shape'} (expected { "tool": "cachewright", "known": [ { "rule", "file", "field", "fingerprint", ... } ] })`);
}

export function compareWithKnown(files: readonly ReviewedFile[], known: readonly KnownEntry[]): KnownComparison {
  const current = identify(files);
  const { kept, added, gone } = pairUp(known, current);
  const stateOf = new Map<Finding, BaselineState>();
  for (const item of kept) stateOf.set(item.finding, 'unchanged');
  for (const item of added) stateOf.set(item.finding, 'new');
  return { stateOf, unchanged: kept, new: added, gone: [...gone].sort(byEntry) };
}
