// `cachewright lint --known FILE` and `--record-known FILE` (docs/cli.md): the CLI's side of
// known findings. Reading and writing the file happens here; what matches what is src/review's.
import * as fs from 'node:fs';
import { fail, ok, type Outcome } from '../core/results';
import { compareWithKnown, readKnownFile, recordKnown, renderKnownFile, type KnownComparison } from '../review/known';
import { reviewedFiles as reviewedFilesOf, type ReviewedFile } from '../review/types';
import { ioMessage, readRegularText } from '../files/open';
import { displayPath, stripBom } from './lint-discovery';
import { writeFileAtomic } from './lint-fix';
import type { LintRun } from './lint-results';

/** The files of a run as the review reads them; the findings are the run's own objects. */
export function reviewedFiles(run: Pick<LintRun, 'mapping' | 'files'>): ReviewedFile[] {
  return reviewedFilesOf(run.mapping.dir, run.files);
}

export function compareRunWithKnown(run: Pick<LintRun, 'mapping' | 'files'>, knownPath: string, cwd: string): Outcome<KnownComparison> {
  const shown = displayPath(knownPath, cwd);
  let text: string;
  try {
    text = stripBom(readRegularText(knownPath));
  } catch (error) {
    return fail(`${shown}: cannot read the known-findings file: ${ioMessage(error)}`);
  }
  const known = readKnownFile(knownPath, text);
  if (!known.ok) return fail(`${shown}:${known.error}`);
  return ok(compareWithKnown(reviewedFiles(run), known.value));
}

export function writeKnown(run: Pick<LintRun, 'mapping' | 'files'>, path: string, cwd: string): Outcome<number> {
  const record = recordKnown(reviewedFiles(run));
  try {
    const bytes = Buffer.from(renderKnownFile(record), 'utf8');
    // A file that is there is replaced whole or not at all; a new one is simply written.
    if (fs.existsSync(path)) writeFileAtomic(path, bytes);
    else fs.writeFileSync(path, bytes);
  } catch (error) {
    return fail(`${displayPath(path, cwd)}: cannot write the known-findings file: ${ioMessage(error)}`);
  }
  return ok(record.known.length);
}
