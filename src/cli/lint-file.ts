// One definition file through `cachewright lint`: read it, lint it, fix it with --fix and write it
// back. Shared by the command's own loop and its worker threads; never throws.
import { lintPrepared, oversizedFileReport, prepareDocument, type FileReport, type LintOptions, type Mapping } from '../lint';
import { FileReadError, ioMessage, readRegularFile } from '../files/open';
import { displayPath, stripBom } from './lint-discovery';
import { encodeLike, fixText, writeFileAtomic } from './lint-fix';
import type { ImageFactsCache } from '../image/facts-cache';
import type { TraceCurves } from './lint-traces';
import { traceRequestsOf } from '../lint/traces';
import { outputOf, type LintedFile } from './lint-results';

export type LintFormat = 'text' | 'json' | 'sarif';

export interface LintRequest {
  paths: string[];
  mappingPath?: string;
  format: LintFormat;
  fix: boolean;
  allowWarnings?: number;
  errorsOnly: boolean;
  images: boolean;
  /** Definition files above this many bytes are reported, not read (--file-size-limit). */
  fileSizeLimit: number;
  /**
   * The mapping file's text when it is not to be read from `mappingPath` (compare lints the base tree
   * with the head's mapping, placed at the same spot in the base tree): threads load it from here.
   */
  mappingText?: string;
  /** Each disk's located values travel with its report (compare compares the settings as written). */
  diskValues?: boolean;
  /** --known FILE and --record-known FILE, as given. */
  known?: string;
  recordKnown?: string;
}

/** Reads one file, lints it and (with --fix) fixes it; never throws. */
export async function lintFile(path: string, mapping: Mapping, request: LintRequest, images: ImageFactsCache, traces: TraceCurves, notes: string[], cwd: string): Promise<LintedFile> {
  const output = (report: FileReport) => outputOf(report, request.diskValues === true);
  let bytes: Buffer;
  try {
    bytes = readRegularFile(path, { maxBytes: request.fileSizeLimit });
  } catch (error) {
    if (error instanceof FileReadError && error.reason === 'too-large') {
      const report = oversizedFileReport(path, BigInt(error.size ?? request.fileSizeLimit + 1), BigInt(request.fileSizeLimit), 'raise the limit with --file-size-limit SIZE to lint it');
      return { path, report: output(report), fixed: 0 };
    }
    return { path, error: `cannot read: ${ioMessage(error)}`, fixed: 0 };
  }
  const decoded = bytes.toString('utf8');
  const hadBom = decoded.charCodeAt(0) === 0xfeff;
  // Offsets are counted without the byte order mark, as editors count them; --fix puts it back.
  const text = stripBom(decoded);
  let report: FileReport;
  const options: LintOptions = { ...(request.images ? { images: images.lookup } : {}), traces: traces.lookup };
  try {
    const prepared = prepareDocument({ path, text }, mapping);
    if (request.images && prepared.imagePaths.length > 0) await images.load(prepared.imagePaths);
    const traceRequests = traceRequestsOf(prepared, options.images);
    if (traceRequests.length > 0) await traces.load(traceRequests);
    report = lintPrepared(prepared, options);
  } catch (error) {
    return { path, error: `internal error while linting: ${error instanceof Error ? error.message : String(error)}`, fixed: 0 };
  }
  if (!request.fix || !report.parsed || !report.findings.some((f) => f.fix && !f.accepted)) return { path, report: output(report), fixed: 0 };
  if (!encodeLike(text, hadBom).equals(bytes)) {
    notes.push(`${displayPath(path, cwd)}: left unchanged by --fix: the file is not valid UTF-8, so writing it back would change bytes the fixes do not touch`);
    return { path, report: output(report), fixed: 0 };
  }
  const outcome = fixText(path, text, mapping, report, options);
  if (outcome.withheld) notes.push(`${displayPath(path, cwd)}: ${outcome.withheld}`);
  if (outcome.applied === 0) return { path, report: output(outcome.report), fixed: 0 };
  try {
    writeFileAtomic(path, encodeLike(outcome.text, hadBom));
  } catch (error) {
    return { path, report: output(report), error: `cannot write the fixes: ${ioMessage(error)}`, fixed: 0 };
  }
  return { path, report: output(outcome.report), fixed: outcome.applied };
}

