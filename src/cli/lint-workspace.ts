// The step after every file of a run is linted (on whichever thread): the engine's cross-file
// rules (the host budget) run over the whole set, adding their findings to the files' reports.
import { lintHosts } from '../lint';
import type { LintRun } from './lint-results';

export function completeRun(run: Pick<LintRun, 'mapping' | 'files'>): void {
  lintHosts(run.files.flatMap((file) => (file.report ? [{ path: file.path, machines: file.report.machines, findings: file.report.findings }] : [])), run.mapping);
}
