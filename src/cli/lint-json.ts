// `cachewright lint --format json` (docs/cli.md): one document for the whole run, byte counts as
// exact integers, paths relative to the mapping file's folder, positions 1-based.
import { CAUTIONS } from '../core/cautions';
import { stringifyJson } from '../core/json';
import type { Finding, Fix } from '../lint';
import { baselineOf, mappingRelative, shownFindings, summarize, type LintRun } from './lint-results';

/**
 * A byte-count object with its bigints as plain numbers, so the whole document can go through the
 * engine's native JSON.stringify; undefined when a value is past 2^53 and only the exact writer
 * can print it.
 */
function plainCounts(counts: object): Record<string, number | string | boolean> | undefined {
  const out: Record<string, number | string | boolean> = {};
  for (const [key, value] of Object.entries(counts)) {
    if (typeof value === 'bigint') {
      if (value > BigInt(Number.MAX_SAFE_INTEGER) || value < -BigInt(Number.MAX_SAFE_INTEGER)) return undefined;
      out[key] = Number(value);
    } else if (value !== undefined) out[key] = value as number | string | boolean;
  }
  return out;
}

const fixJson = (fix: Fix) => ({ title: fix.title, edits: fix.edits.map((e) => ({ offset: e.offset, length: e.length, text: e.text })) });

/**
 * Field by field, in the order the contract lists them: an object spread followed by more fields
 * (`{ ...position(range), fix }`) takes the JavaScript engine's slow path, and this runs for every finding of a run.
 */
function findingJson(run: LintRun, finding: Finding) {
  const { range } = finding;
  return {
    rule: finding.rule,
    severity: finding.severity,
    message: finding.message,
    pointer: finding.pointer,
    machine: finding.machine,
    disk: finding.disk,
    line: range.line,
    column: range.column,
    endLine: range.endLine,
    endColumn: range.endColumn,
    fix: finding.fix ? fixJson(finding.fix) : undefined,
    alternatives: finding.alternatives?.map(fixJson),
    related: finding.related?.map((r) => relatedJson(run, r)),
    accepted: finding.accepted ? { reason: finding.accepted.reason } : undefined,
    baselineState: baselineOf(run, finding),
  };
}

function relatedJson(run: LintRun, related: NonNullable<Finding['related']>[number]) {
  const { range } = related;
  if (related.file === undefined) return { message: related.message, pointer: related.pointer, line: range.line, column: range.column, endLine: range.endLine, endColumn: range.endColumn };
  return { message: related.message, file: mappingRelative(run.mapping, related.file), pointer: related.pointer, line: range.line, column: range.column, endLine: range.endLine, endColumn: range.endColumn };
}

export function renderJson(run: LintRun): string {
  const summary = summarize(run);
  let exact = true;
  const counts = (value: object) => {
    const plain = plainCounts(value);
    if (plain) return plain;
    exact = false;
    return value;
  };
  const files = run.files.map((file) => ({
    path: mappingRelative(run.mapping, file.path),
    error: file.error,
    fixed: run.fix ? file.fixed : undefined,
    disks: (file.report?.disks ?? []).map((disk) => ({
      machine: disk.machine,
      name: disk.name,
      pointer: disk.pointer,
      sizing: counts(disk.sizing),
      recommended: counts(disk.recommended),
      measured: disk.measured ? counts(disk.measured) : undefined,
    })),
    findings: file.report ? shownFindings(run, file.report).map((f) => findingJson(run, f)) : [],
  }));
  const document = {
    tool: 'cachewright',
    version: run.version,
    files,
    summary: {
      files: summary.files,
      disks: summary.disks,
      errors: summary.errors,
      warnings: summary.warnings,
      infos: summary.infos,
      accepted: summary.accepted,
      fixable: summary.fixable,
      fixed: run.fix ? summary.fixed : undefined,
      unreadable: summary.failed > 0 ? summary.failed : undefined,
      known: run.known ? summary.known : undefined,
      knownGone: run.known ? summary.knownGone : undefined,
    },
    knownGone: run.known?.gone,
    cautions: run.fix && summary.fixed > 0 ? [CAUTIONS.reopen, CAUTIONS.hostMemory, CAUTIONS.review] : undefined,
  };
  // Past 2^53 bytes (a disk of 8 PiB and more) only the bigint-aware writer keeps counts exact.
  return `${exact ? JSON.stringify(document, null, 2) : stringifyJson(document)}\n`;
}
