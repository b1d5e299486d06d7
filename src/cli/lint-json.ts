// `diskwise lint --format json` (CONTRACTS.md §3): one document for the whole run, byte counts as
// exact integers, paths relative to the mapping file's folder, positions 1-based.
import { stringifyJson } from '../core/json';
import type { Finding, SourceRange } from '../lint';
import { mappingRelative, shownFindings, summarize, type LintRun } from './lint-results';

const position = (range: SourceRange) => ({ line: range.line, column: range.column, endLine: range.endLine, endColumn: range.endColumn });

function findingJson(finding: Finding) {
  return {
    rule: finding.rule,
    severity: finding.severity,
    message: finding.message,
    pointer: finding.pointer,
    ...position(finding.range),
    fix: finding.fix ? { title: finding.fix.title, edits: finding.fix.edits.map((e) => ({ offset: e.offset, length: e.length, text: e.text })) } : undefined,
    related: finding.related?.map((r) => ({ message: r.message, pointer: r.pointer, ...position(r.range) })),
    suppressed: finding.suppressed ? { reason: finding.suppressed.reason } : undefined,
  };
}

export function renderJson(run: LintRun): string {
  const summary = summarize(run);
  const files = run.files.map((file) => ({
    path: mappingRelative(run.mapping, file.path),
    error: file.error,
    fixed: run.fix ? file.fixed : undefined,
    disks: (file.report?.disks ?? []).map((disk) => ({
      machine: disk.machine,
      name: disk.name,
      pointer: disk.pointer,
      sizing: disk.sizing,
      recommended: disk.recommended,
    })),
    findings: file.report ? shownFindings(run, file.report).map(findingJson) : [],
  }));
  return `${stringifyJson({
    tool: 'diskwise',
    version: run.version,
    files,
    summary: {
      files: summary.files,
      disks: summary.disks,
      errors: summary.errors,
      warnings: summary.warnings,
      infos: summary.infos,
      suppressed: summary.suppressed,
      fixable: summary.fixable,
      fixed: run.fix ? summary.fixed : undefined,
      unreadable: summary.failed > 0 ? summary.failed : undefined,
    },
  })}\n`;
}
