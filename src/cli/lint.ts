// `cachewright lint` (docs/cli.md): find the mapping file, pick the definition files, lint each
// one (and fix it with --fix), print text, JSON or SARIF, and exit 0, 1 or 2 as the contract says.
import { formatSize } from '../core/format';
import { parseSize, SIZE_UNITS_HELP } from '../core/units';
import { DEFINITION_SIZE_LIMIT, MAX_FILE_SIZE_LIMIT } from '../files/open';
import { allowWarningsOption, formatOption, lastOption, readCommand, type OptionSpec, type ParsedArgs } from './args';
import { fail, ok, type Outcome } from '../core/results';
import { EXIT_FINDINGS, EXIT_OK, EXIT_USAGE, type CommandIO } from './io';
import { displayPath, resolveMapping, selectFiles } from './lint-discovery';
import type { LintFormat, LintRequest } from './lint-file';
import { renderJson } from './lint-json';
import { lintFiles } from './lint-parallel';
import { startProgress } from './lint-progress';
import { mappingRelative, summarize, type LintedFile, type LintRun } from './lint-results';
import { staleAcceptEntries, type Mapping, type StaleAcceptEntry } from '../lint';
import { renderSarif } from './lint-sarif';
import { renderLintText } from './lint-text';
import { compareRunWithKnown, writeKnown } from './lint-known';
import { completeRun } from './lint-workspace';
import * as fs from 'node:fs';
import * as nodePath from 'node:path';

const OPTIONS: Record<string, OptionSpec> = {
  mapping: { value: true },
  format: { value: true },
  fix: { value: false },
  'allow-warnings': { value: true },
  'errors-only': { value: false },
  'no-images': { value: false },
  'file-size-limit': { value: true },
  known: { value: true },
  'record-known': { value: true },
  help: { value: false },
};

const FORMATS: readonly LintFormat[] = ['text', 'json', 'sarif'];

export const LINT_USAGE = `usage: cachewright lint [PATH...] [--mapping FILE] [--format text|json|sarif]
                     [--fix] [--allow-warnings N] [--errors-only] [--no-images]
                     [--known FILE] [--record-known FILE] [--file-size-limit SIZE]

  PATH              definition files or folders (default: every file the mapping file includes);
                    a file named here is always checked, a folder only for the files the mapping includes
  --mapping         the mapping file that says where disks sit (default: cachewright.yaml,
                    cachewright.yml or cachewright.json here or in the nearest folder above)
  --format          text (default), json or sarif (SARIF 2.1.0)
  --fix             write every computed fix into the files; nothing else in them changes
  --allow-warnings  how many warnings may remain before the run counts as failed (default: any number)
  --errors-only     print errors only; warnings are still counted against --allow-warnings
  --no-images       leave the image files the definitions name unread (when they live elsewhere)
  --file-size-limit definition files larger than this SIZE are not linted but reported as one
                    error each (default 32M; sizes as in the mapping file, at most 256M)
  --known           a known-findings file: only findings not listed in it count toward the exit
                    status; listed ones that are gone are reported so the file can be trimmed
  --record-known    write every current finding to this known-findings file (sorted, stable)

exit status:
  0  nothing wrong beyond accepted findings, infos and the warnings --allow-warnings lets through
  1  at least one error, or more warnings than --allow-warnings lets through
  2  the command could not do its job: a bad option, a broken mapping file, a file it could not
     read or write
environment: CACHEWRIGHT_JOBS=N lints on N threads (default: one per core for large runs)
`;

function readRequest(args: ParsedArgs): Outcome<LintRequest> {
  const format = formatOption(args, FORMATS);
  if (!format.ok) return format;
  const allowWarnings = allowWarningsOption(args);
  if (!allowWarnings.ok) return allowWarnings;
  const fileSizeLimit = readFileSizeLimit(lastOption(args, 'file-size-limit'));
  if (typeof fileSizeLimit === 'string') return fail(fileSizeLimit);
  return ok({
    fileSizeLimit,
    paths: args.positionals,
    mappingPath: lastOption(args, 'mapping'),
    format: format.value,
    fix: args.flags.has('fix'),
    allowWarnings: allowWarnings.value,
    errorsOnly: args.flags.has('errors-only'),
    images: !args.flags.has('no-images'),
    known: lastOption(args, 'known'),
    recordKnown: lastOption(args, 'record-known'),
  });
}

/** The --file-size-limit value in bytes, or why it cannot be one. */
function readFileSizeLimit(raw: string | undefined): number | string {
  if (raw === undefined) return DEFINITION_SIZE_LIMIT;
  const size = parseSize(raw);
  if (!size.ok || size.value < 1n || size.value > BigInt(MAX_FILE_SIZE_LIMIT)) return `--file-size-limit needs a size from 1 byte to ${formatSize(BigInt(MAX_FILE_SIZE_LIMIT))} (${SIZE_UNITS_HELP}), not "${raw}"`;
  return Number(size.value);
}

/** --known and --record-known: an exit status when either file cannot be read or written. */
function applyKnown(run: LintRun, request: LintRequest, io: CommandIO): number | undefined {
  if (request.known !== undefined) {
    const comparison = compareRunWithKnown(run, nodePath.resolve(io.cwd, request.known), io.cwd);
    if (!comparison.ok) {
      io.stderr(`${comparison.error}\n`);
      return EXIT_USAGE;
    }
    run.known = comparison.value;
  }
  if (request.recordKnown !== undefined) {
    const written = writeKnown(run, nodePath.resolve(io.cwd, request.recordKnown), io.cwd);
    if (!written.ok) {
      io.stderr(`${written.error}\n`);
      return EXIT_USAGE;
    }
  }
  return undefined;
}

/**
 * Why an entry naming a file the run did not lint accepts nothing: the file is gone, or the mapping
 * does not include it; undefined when it is there and included (a folder the run could not walk,
 * say), since nothing is known of its findings then.
 */
function unreachedWhy(file: string, mapping: Mapping): string | undefined {
  if (!fs.existsSync(file)) return 'there is no such definition file; remove it, or correct its file';
  if (!mapping.includes(file)) return 'the mapping file does not include that file; remove it, or correct its file';
  return undefined;
}

/** A stale accept entry, said where it is written in the mapping file; undefined when it cannot be told. */
function staleEntryNote(stale: StaleAcceptEntry, mapping: Mapping, cwd: string): string | undefined {
  const where = `${stale.rule} at "${stale.pointer}"${stale.file !== undefined ? ` in ${mappingRelative(mapping, stale.file)}` : ''}`;
  const why = stale.reached || stale.file === undefined ? 'no file the run linted has such a finding there; remove it, or correct its pointer' : unreachedWhy(stale.file, mapping);
  return why === undefined ? undefined : `${displayPath(mapping.path, cwd)}:${stale.range.line}:${stale.range.column}: accept[${stale.entry}] (${where}) accepts nothing any more: ${why}`;
}

export async function runLint(argv: readonly string[], io: CommandIO, version: string): Promise<number> {
  const read = readCommand(argv, OPTIONS, { name: 'lint', usage: LINT_USAGE }, io, readRequest);
  if (!read.ok) return read.error;
  const request = read.value;

  const mapping = resolveMapping(io.cwd, request.mappingPath, request.paths);
  if (!mapping.ok) {
    io.stderr(`${mapping.error}\n`);
    return EXIT_USAGE;
  }
  const selection = selectFiles(mapping.value, io.cwd, request.paths);
  const notes: string[] = [];
  const progress = startProgress(io, selection.files.length, request.fix ? 'fixing' : 'linting');
  const linted = await lintFiles(selection.files, mapping.value, request, io.cwd, progress);
  notes.push(...[...linted.notes].sort());
  const files: LintedFile[] = [...selection.errors.map((e) => ({ path: e.path, error: e.message, fixed: 0 })), ...linted.files];
  progress.done();
  files.sort((a, b) => (a.path < b.path ? -1 : a.path > b.path ? 1 : 0));

  const run: LintRun = { mapping: mapping.value, cwd: io.cwd, files, errorsOnly: request.errorsOnly, fix: request.fix, version };
  completeRun(run);
  const known = applyKnown(run, request, io);
  if (known !== undefined) return known;
  const render = request.format === 'json' ? renderJson : request.format === 'sarif' ? renderSarif : renderLintText;
  io.stdout(render(run));

  const problems: string[] = [];
  for (const file of files) if (file.error !== undefined) problems.push(`${displayPath(file.path, io.cwd)}: ${file.error}`);
  for (const folder of selection.empty) notes.push(`${folder}: the mapping file includes no definition files in this folder`);
  // Only a run over every file the mapping includes can tell that an entry accepts nothing anywhere.
  for (const stale of staleAcceptEntries(files.map((f) => ({ path: f.path, ...(f.report?.acceptEntries ? { acceptEntries: f.report.acceptEntries } : {}) })), mapping.value, request.paths.length === 0)) {
    const note = staleEntryNote(stale, mapping.value, io.cwd);
    if (note !== undefined) notes.push(note);
  }
  const summary = summarize(run);
  const tooManyWarnings = request.allowWarnings !== undefined && summary.warnings > request.allowWarnings;
  if (tooManyWarnings) notes.push(`${summary.warnings} warnings where --allow-warnings lets ${request.allowWarnings} through`);
  if (selection.files.length === 0 && request.paths.length === 0) notes.push(`the mapping file's include globs match no files below ${displayPath(mapping.value.dir, io.cwd)}`);
  for (const line of [...problems, ...notes]) io.stderr(`${line}\n`);

  if (problems.length > 0) return EXIT_USAGE;
  if (summary.errors > 0 || tooManyWarnings) return EXIT_FINDINGS;
  return EXIT_OK;
}
