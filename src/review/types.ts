// What the review reads of a lint run: per definition file, its disks, machines and findings. The
// CLI's report views fit these shapes as they are; nothing here reads files or runs git.
import * as nodePath from 'node:path';
import type { Finding } from '../core/results';
import type { DiskReport, MachineReport } from '../lint/report';

/** A disk as the review reads it: the lint report's own fields (DiskReport), nothing recomputed. */
export type ReviewedDisk = Pick<DiskReport, 'machine' | 'name' | 'named' | 'pointer' | 'sizing'> & {
  /** The values the definition writes for the disk, as written (the report's `values`). */
  values?: Readonly<Record<string, { raw: unknown } | undefined>>;
};

/** A machine as the review reads it: the lint report's own fields (MachineReport), nothing recomputed. */
export type ReviewedMachine = Pick<MachineReport, 'name' | 'named' | 'pointer' | 'range' | 'memory' | 'host' | 'cacheMemoryTotal'>;

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
