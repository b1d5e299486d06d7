// `cachewright compare BASE_DIR HEAD_DIR` and `compare --git REF [HEAD_DIR]` (docs/cli.md): lint
// both trees with the head's mapping file, pair the results up and print what the change does.
// Exit 1 only for errors head adds, or more new warnings than --allow-warnings; 2 for usage and I/O.
import * as fs from 'node:fs';
import * as nodePath from 'node:path';
import type { Mapping } from '../lint';
import { DEFINITION_SIZE_LIMIT, readRegularText } from '../files/open';
import { identify } from '../review/identity';
import { compareWithKnown, entryOf } from '../review/known';
import { compareRuns, type Comparison } from '../review/compare';
import { allowWarningsOption, formatOption, lastOption, readCommand, usageError, type OptionSpec, type ParsedArgs } from './args';
import { fail, ok, type Outcome } from '../core/results';
import { extractRevision } from '../git/revision';
import { renderCompareJson, renderCompareText } from './compare-output';
import { renderCompareMarkdown } from '../review/markdown';
import { EXIT_FINDINGS, EXIT_OK, EXIT_USAGE, type CommandIO } from './io';
import { displayPath, findNearestMappingFile, loadMappingText, selectFiles, stripBom } from './lint-discovery';
import type { LintRequest } from './lint-file';
import { reviewedFiles } from './lint-known';
import { lintFiles } from './lint-parallel';
import { startProgress } from './lint-progress';
import type { LintedFile, LintRun } from './lint-results';
import { renderSarif } from './lint-sarif';
import { completeRun } from './lint-workspace';

const OPTIONS: Record<string, OptionSpec> = {
  git: { value: true },
  mapping: { value: true },
  'allow-warnings': { value: true },
  format: { value: true },
  'link-base': { value: true },
  help: { value: false },
};

const FORMATS = ['text', 'json', 'sarif', 'markdown'] as const;
export type CompareFormat = (typeof FORMATS)[number];

export const COMPARE_USAGE = `usage: cachewright compare BASE_DIR HEAD_DIR [options]
       cachewright compare --git REF [HEAD_DIR] [options]

  what a change does to the cache settings: both trees are linted with the head's mapping file

  BASE_DIR, HEAD_DIR  two checkouts of the definitions (HEAD_DIR defaults to this folder with --git)
  --git REF           read the base from this git revision of the repository HEAD_DIR is in
                      (with git archive, into a temporary folder; the work tree is not touched)
  --mapping FILE      the mapping file (default: the nearest one in or above HEAD_DIR), applied
                      to both sides at the same place
  --allow-warnings N  fail (exit 1) when head adds more than N warnings (default: no limit)
  --format            text (default), json, sarif (head's findings with their baseline state
                      against base) or markdown (a summary to post on a pull request)
  --link-base URL     markdown: prefix for file links (default: links relative to the mapping
                      file's folder)

exit status: 0 head adds no errors and warnings within --allow-warnings; 1 it does;
             2 usage, mapping file, git or file read problems
`;

interface CompareRequest {
  base?: string;
  head: string;
  gitRef?: string;
  mapping?: string;
  allowWarnings?: number;
  format: CompareFormat;
  linkBase?: string;
}

function readRequest(args: ParsedArgs): Outcome<CompareRequest> {
  const format = formatOption(args, FORMATS);
  if (!format.ok) return format;
  const allowed = allowWarningsOption(args);
  if (!allowed.ok) return allowed;
  const allowWarnings = allowed.value;
  const gitRef = lastOption(args, 'git');
  const positionals = args.positionals;
  if (gitRef !== undefined ? positionals.length > 1 : positionals.length !== 2) {
    return fail(gitRef !== undefined ? 'with --git, give at most one folder (the head)' : 'give two folders, BASE_DIR and HEAD_DIR, or --git REF');
  }
  const common = { format: format.value, ...(allowWarnings !== undefined ? { allowWarnings } : {}), mapping: lastOption(args, 'mapping'), linkBase: lastOption(args, 'link-base') };
  if (gitRef !== undefined) return ok({ ...common, gitRef, head: positionals[0] ?? '.' });
  const [base, head] = positionals;
  if (base === undefined || head === undefined) return fail('give two folders, BASE_DIR and HEAD_DIR, or --git REF');
  return ok({ ...common, base, head });
}

function isDirectory(path: string): boolean {
  try {
    return fs.statSync(path).isDirectory();
  } catch {
    return false;
  }
}

interface Side {
  label: string;
  run: LintRun;
}

async function lintTree(io: CommandIO, mapping: Mapping, mappingText: string, label: string, version: string): Promise<LintRun> {
  const selection = selectFiles(mapping, mapping.dir, []);
  // Image files are not part of a change's text and a checkout of the base has none: compare
  // reviews the definitions alone (lint reads the images).
  const request: LintRequest = { paths: [], mappingPath: mapping.path, mappingText, format: 'json', fix: false, errorsOnly: false, images: false, fileSizeLimit: DEFINITION_SIZE_LIMIT, diskValues: true };
  const progress = startProgress(io, selection.files.length, `linting ${label}`);
  const linted = await lintFiles(selection.files, mapping, request, mapping.dir, progress);
  progress.done();
  const files: LintedFile[] = [...linted.files].sort((a, b) => (a.path < b.path ? -1 : a.path > b.path ? 1 : 0));
  const run: LintRun = { mapping, cwd: io.cwd, files, errorsOnly: false, fix: false, version };
  completeRun(run);
  return run;
}

export interface CompareOutcome {
  comparison: Comparison;
  base: Side;
  head: Side;
}

export async function runCompare(argv: readonly string[], io: CommandIO, version: string): Promise<number> {
  const read = readCommand(argv, OPTIONS, { name: 'compare', usage: COMPARE_USAGE }, io, readRequest);
  if (!read.ok) return read.error;
  const request = read.value;
  const headDir = nodePath.resolve(io.cwd, request.head);
  if (!isDirectory(headDir)) return usageError(io, 'compare', COMPARE_USAGE, `${request.head} is not a folder`);
  if (request.base !== undefined && !isDirectory(nodePath.resolve(io.cwd, request.base))) return usageError(io, 'compare', COMPARE_USAGE, `${request.base} is not a folder`);

  const mappingPath = request.mapping !== undefined ? nodePath.resolve(io.cwd, request.mapping) : findNearestMappingFile(headDir);
  if (mappingPath === undefined) {
    io.stderr(`cachewright compare: no mapping file in ${displayPath(headDir, io.cwd)} or any folder above it; name one with --mapping FILE\n`);
    return EXIT_USAGE;
  }
  let mappingText: string;
  try {
    mappingText = stripBom(readRegularText(mappingPath));
  } catch (error) {
    io.stderr(`${displayPath(mappingPath, io.cwd)}: cannot read the mapping file: ${error instanceof Error ? error.message : String(error)}\n`);
    return EXIT_USAGE;
  }
  const headMapping = loadMappingText(mappingText, mappingPath, displayPath(mappingPath, io.cwd));
  if (!headMapping.ok) {
    io.stderr(`${headMapping.error}\n`);
    return EXIT_USAGE;
  }

  let baseDir: string;
  let baseLabel: string;
  let cleanup = () => {};
  if (request.gitRef !== undefined) {
    const extracted = await extractRevision(request.gitRef, headDir);
    if (!extracted.ok) {
      io.stderr(`cachewright compare: ${extracted.error}\n`);
      return EXIT_USAGE;
    }
    baseDir = extracted.value.baseDir;
    baseLabel = request.gitRef;
    cleanup = extracted.value.remove;
  } else {
    baseDir = nodePath.resolve(io.cwd, request.base ?? '.');
    baseLabel = displayPath(baseDir, io.cwd);
  }
  try {
    // The head's mapping file, placed in the base tree where it sits in the head tree.
    const relative = nodePath.relative(headDir, mappingPath);
    const baseMappingPath = nodePath.isAbsolute(relative) ? nodePath.join(baseDir, nodePath.basename(mappingPath)) : nodePath.join(baseDir, relative);
    const baseMapping = loadMappingText(mappingText, baseMappingPath);
    if (!baseMapping.ok) {
      io.stderr(`${baseMapping.error}\n`);
      return EXIT_USAGE;
    }
    const base: Side = { label: baseLabel, run: await lintTree(io, baseMapping.value, mappingText, 'base', version) };
    const head: Side = { label: displayPath(headDir, io.cwd), run: await lintTree(io, headMapping.value, mappingText, 'head', version) };

    const unreadable = [...base.run.files.map((f) => ({ f, root: baseDir })), ...head.run.files.map((f) => ({ f, root: headDir }))].filter(({ f }) => f.error !== undefined);
    for (const { f, root } of unreadable) io.stderr(`${f === undefined ? '' : nodePath.relative(root, f.path)}: ${f.error}\n`);
    if (unreadable.length > 0) return EXIT_USAGE;

    const baseFiles = reviewedFiles(base.run);
    const headFiles = reviewedFiles(head.run);
    const comparison = compareRuns(baseFiles, headFiles, headMapping.value.hosts);
    const outcome: CompareOutcome = { comparison, base, head };
    switch (request.format) {
      case 'json':
        io.stdout(renderCompareJson(outcome, version));
        break;
      case 'markdown':
        io.stdout(renderCompareMarkdown({ comparison, baseLabel: base.label }, { ...(request.linkBase !== undefined ? { linkBase: request.linkBase } : {}), ...(request.allowWarnings !== undefined ? { allowWarnings: request.allowWarnings } : {}) }));
        break;
      case 'sarif':
        head.run.known = compareWithKnown(headFiles, identify(baseFiles).map(entryOf));
        io.stdout(renderSarif(head.run));
        break;
      default:
        io.stdout(renderCompareText(outcome, io.cwd));
    }
    const { added } = comparison;
    const tooManyWarnings = request.allowWarnings !== undefined && added.warnings > request.allowWarnings;
    if (tooManyWarnings) io.stderr(`head adds ${added.warnings} warnings, more than --allow-warnings ${request.allowWarnings} allows\n`);
    return added.errors > 0 || tooManyWarnings ? EXIT_FINDINGS : EXIT_OK;
  } finally {
    cleanup();
  }
}
