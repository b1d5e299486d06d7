// `cachewright lint --fix`: apply the engine's fix edits to a file's text, pass after pass, and write
// the result atomically. The edits are the engine's own; this module only decides which of them
// can go together and makes sure nothing else in the file changes.
import * as fs from 'node:fs';
import * as nodePath from 'node:path';
import { randomBytes } from 'node:crypto';
import { lintDocument, type FileReport, type Finding, type LintOptions, type Mapping } from '../lint';
import { applyEdits, FIX_PASSES, nonOverlapping } from '../model/edits';


export interface FixOutcome {
  /** The text after every fix that could be applied (the input text when none could). */
  text: string;
  /** The lint of `text`. */
  report: FileReport;
  /** How many fixes went in. */
  applied: number;
  /** Set when fixes were held back because they would have broken the file. */
  withheld?: string;
}

/** An accepted finding was reviewed and kept as it is: fixing it would undo that decision. */
const wantsFix = (finding: Finding): boolean => finding.fix !== undefined && finding.fix.edits.length > 0 && !finding.accepted;

/**
 * Lints `text`, applies a non-overlapping set of fixes, lints again, and repeats until no fix is
 * left (or the passes run out, or a pass would produce the same text again). A file that does not
 * parse is left alone; a pass whose result would not parse is dropped.
 */
export function fixText(path: string, text: string, mapping: Mapping, first?: FileReport, options: LintOptions = {}): FixOutcome {
  let report = first ?? lintDocument({ path, text }, mapping, options);
  let current = text;
  let applied = 0;
  if (!report.parsed) return { text, report, applied };
  const seen = new Set<string>([current]);
  for (let pass = 0; pass < FIX_PASSES; pass++) {
    const { chosen } = nonOverlapping(report.findings.filter(wantsFix).flatMap((f) => (f.fix ? [f.fix] : [])));
    if (chosen.length === 0) break;
    const next = applyEdits(current, chosen.flatMap((fix) => fix.edits));
    if (seen.has(next)) break;
    const nextReport = lintDocument({ path, text: next }, mapping, options);
    if (!nextReport.parsed) {
      return { text: current, report, applied, withheld: `${chosen.length} fix${chosen.length === 1 ? '' : 'es'} left out: applying them would make the file unreadable` };
    }
    seen.add(next);
    current = next;
    report = nextReport;
    applied += chosen.length;
  }
  return { text: current, report, applied };
}

/**
 * Replaces a file's content atomically: a temporary file beside it, with the original's mode, then
 * a rename over it. A symbolic link is followed, so the link stays a link. On failure the temporary
 * file is removed and the original is untouched.
 */
export function writeFileAtomic(path: string, data: Buffer): void {
  const target = fs.realpathSync(path);
  const mode = fs.statSync(target).mode & 0o7777;
  const temp = nodePath.join(nodePath.dirname(target), `.${nodePath.basename(target)}.${process.pid}.${randomBytes(4).toString('hex')}.cachewright-tmp`);
  try {
    fs.writeFileSync(temp, data, { mode, flag: 'wx' });
    // The umask may have narrowed the mode the file was created with.
    fs.chmodSync(temp, mode);
    fs.renameSync(temp, target);
  } catch (error) {
    try {
      fs.unlinkSync(temp);
    } catch {
      // nothing was created
    }
    throw error;
  }
}

/** The bytes to write back: the fixed text with the byte order mark the file had. */
export function encodeLike(text: string, hadBom: boolean): Buffer {
  return Buffer.from(hadBom ? `\ufeff${text}` : text, 'utf8');
}
