// A whole file linted from its prepared document: the one path both a cold lint and the editor
// session's full re-lint take.
import { lintUnits } from './disks';
import { unparsedReport, type PreparedDocument } from './documents';
import { FileContext, type LintOptions } from './prepare';
import { assemble, type FileReport, type Units } from './report';

/** What a full lint leaves behind besides its report: what the editor session keeps to re-check one disk later. */
export interface LintedUnits {
  context: FileContext;
  units: Units;
}

export function lintPreparedUnits(prepared: PreparedDocument, options: LintOptions): { report: FileReport; linted?: LintedUnits } {
  const { file, mapping, read } = prepared;
  if (!read.document || !prepared.extraction) return { report: unparsedReport(file.path, read.problems) };
  const context = new FileContext(read.document, mapping, options);
  const units = lintUnits(context, prepared.extraction);
  return { report: assemble(context, units), linted: { context, units } };
}
