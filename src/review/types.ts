// What the review reads of a lint run: per definition file, its disks, machines and findings. The
// CLI's report views fit these shapes as they are; nothing here reads files or runs git.
import * as nodePath from 'node:path';
import type { Finding, SizingReport, SourceRange } from '../core/results';

export interface ReviewedDisk {
  machine: string;
  name: string;
  /** Whether the name comes from the definition (else it depends on the disk's index). */
  named: boolean;
  pointer: string;
  sizing: SizingReport;
  /** The values the definition writes for the disk, as written (the report's `values`). */
  values?: Readonly<Record<string, { raw: unknown } | undefined>>;
}

export interface ReviewedMachine {
  name: string;
  named: boolean;
  pointer: string;
  range: SourceRange;
  memory?: bigint;
  /** The hypervisor host the machine runs on, when the mapping says where that is written. */
  host?: string;
  cacheMemoryTotal: bigint;
}

export interface ReviewedFile {
  /** Relative to the mapping file's folder, with forward slashes: the same on every checkout. */
  path: string;
  disks: readonly ReviewedDisk[];
  machines: readonly ReviewedMachine[];
  findings: readonly Finding[];
}

/** A definition file's path relative to the mapping file's folder, with forward slashes. */
export function relativeToMapping(mappingDir: string, absolutePath: string): string {
  return nodePath.relative(mappingDir, absolutePath).split(nodePath.sep).join('/');
}

/** Linted files as the review reads them (paths made relative); the findings are the reports' own objects. */
export function reviewedFiles(mappingDir: string, files: readonly { path: string; report?: Omit<ReviewedFile, 'path'> }[]): ReviewedFile[] {
  return files.flatMap((file) => (file.report ? [{ path: relativeToMapping(mappingDir, file.path), disks: file.report.disks, machines: file.report.machines, findings: file.report.findings }] : []));
}
