// What one `cachewright lint` run produced, in the shape every output format reads: the files with
// their reports, and the counts the summary line and the exit code are computed from.
import type { FileReport, Finding, Mapping } from '../lint';
import type { BaselineState, KnownComparison } from '../review/known';
import { relativeToMapping } from '../review/types';

type DiskReport = FileReport['disks'][number];

/**
 * What the outputs read of a disk's report (the panel's DiskView is another shape, in
 * src/protocol/panel.ts). The located values only when the run asks for them: compare reads them,
 * lint's outputs do not, and they are more than half of what a lint thread would send per file.
 */
export type OutputDisk = Pick<DiskReport, 'machine' | 'name' | 'named' | 'pointer' | 'sizing' | 'recommended' | 'measured'> & { values?: DiskReport['values'] };

/** What the outputs and the review read of a machine's report. */
export type OutputMachine = Omit<FileReport['machines'][number], 'disks' | 'budget'>;

/** What the outputs read of a file's report: small enough to pass between threads cheaply. */
export interface OutputReport {
  parsed: boolean;
  disks: OutputDisk[];
  machines: OutputMachine[];
  findings: Finding[];
  acceptEntries?: FileReport['acceptEntries'];
}

function outputDisk(d: DiskReport, withValues: boolean): OutputDisk {
  const out: OutputDisk = { machine: d.machine, name: d.name, named: d.named, pointer: d.pointer, sizing: d.sizing, recommended: d.recommended };
  if (d.measured) out.measured = d.measured;
  if (withValues) out.values = d.values;
  return out;
}

export function outputOf(report: FileReport, withValues: boolean): OutputReport {
  return {
    parsed: report.parsed,
    disks: report.disks.map((d) => outputDisk(d, withValues)),
    machines: report.machines.map(({ disks: _disks, budget: _budget, ...machine }) => machine),
    findings: report.findings,
    ...(report.acceptEntries ? { acceptEntries: report.acceptEntries } : {}),
  };
}

export interface LintedFile {
  /** Absolute path. */
  path: string;
  /** Absent when the file could not be read. */
  report?: OutputReport;
  /** Why the file could not be read (or written back by --fix). */
  error?: string;
  /** Fixes --fix applied to this file. */
  fixed: number;
}

export interface LintRun {
  mapping: Mapping;
  cwd: string;
  files: LintedFile[];
  /** --errors-only: only errors are shown (counts and the exit code still see everything). */
  errorsOnly: boolean;
  fix: boolean;
  version: string;
  /** With --known: which findings the known-findings file already lists, and which of it are gone. */
  known?: KnownComparison;
}

/** With --known, whether a finding is new or already known; undefined otherwise (and for accepted ones). */
export const baselineOf = (run: Pick<LintRun, 'known'>, finding: Finding): BaselineState | undefined => run.known?.stateOf.get(finding);

export interface LintSummary {
  files: number;
  disks: number;
  errors: number;
  warnings: number;
  infos: number;
  accepted: number;
  /** Unsuppressed findings that carry a fix. */
  fixable: number;
  fixed: number;
  /** Files that could not be read or written. */
  failed: number;
  /** With --known: findings the known-findings file lists (not counted above), and its entries no longer found. */
  known: number;
  knownGone: number;
}

export function summarize(run: LintRun): LintSummary {
  const summary: LintSummary = { files: 0, disks: 0, errors: 0, warnings: 0, infos: 0, accepted: 0, fixable: 0, fixed: 0, failed: 0, known: 0, knownGone: run.known?.gone.length ?? 0 };
  for (const file of run.files) {
    summary.fixed += file.fixed;
    if (file.error !== undefined) summary.failed++;
    if (!file.report) continue;
    summary.files++;
    summary.disks += file.report.disks.length;
    for (const finding of file.report.findings) {
      if (finding.accepted) {
        summary.accepted++;
        continue;
      }
      if (baselineOf(run, finding) === 'unchanged') {
        summary.known++;
        continue;
      }
      if (finding.severity === 'error') summary.errors++;
      else if (finding.severity === 'warning') summary.warnings++;
      else summary.infos++;
      if (finding.fix && finding.fix.edits.length > 0) summary.fixable++;
    }
  }
  return summary;
}

/** The findings an output shows: everything, or under --errors-only the errors not accepted. */
export function shownFindings(run: LintRun, report: OutputReport): Finding[] {
  return run.errorsOnly ? report.findings.filter((f) => f.severity === 'error' && !f.accepted) : report.findings;
}

/** A definition file's path relative to the mapping file's folder, with forward slashes. */
export function mappingRelative(mapping: Mapping, absolutePath: string): string {
  return relativeToMapping(mapping.dir, absolutePath);
}
