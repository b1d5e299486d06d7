// Where `cachewright lint` finds its mapping file and the definition files to check. Everything that
// can go wrong here (no mapping file, a broken one, a path that does not exist) comes back as
// messages for stderr, never as an exception.
import * as fs from 'node:fs';
import * as nodePath from 'node:path';
// Loaded through require so the bundle takes the package's CommonJS build (its ES module build
// reads import.meta, which a CommonJS bundle does not have).
import tinyglobby = require('tinyglobby');
import { loadMapping, type Mapping } from '../lint';
import { DEFAULT_INCLUDE, MAPPING_FILE_NAMES } from '../model/mapping';
import { fail, ok, type Outcome } from '../core/results';
import { ioMessage, MAPPING_SIZE_LIMIT, readRegularText } from '../files/open';

/** Folders no one keeps definitions in; skipping them keeps the walk fast. */
const NEVER_WALKED = ['**/node_modules/**', '**/.git/**'];

/** A path as a user should read it: relative to the working directory when it lies below it. */
export function displayPath(absolutePath: string, cwd: string): string {
  const relative = nodePath.relative(cwd, absolutePath);
  if (relative === '') return '.';
  return relative.startsWith('..') || nodePath.isAbsolute(relative) ? absolutePath : relative;
}

/** The mapping file in `start` or the nearest folder above it. */
export function findNearestMappingFile(start: string): string | undefined {
  let dir = nodePath.resolve(start);
  for (;;) {
    for (const name of MAPPING_FILE_NAMES) {
      const candidate = nodePath.join(dir, name);
      // Anything but a folder by that name is taken, so a pipe or device there is reported, not passed over.
      if (existsNotFolder(candidate)) return candidate;
    }
    const parent = nodePath.dirname(dir);
    if (parent === dir) return undefined;
    dir = parent;
  }
}

function existsNotFolder(path: string): boolean {
  try {
    return !fs.statSync(path).isDirectory();
  } catch {
    return false;
  }
}

function isFile(path: string): boolean {
  try {
    return fs.statSync(path).isFile();
  } catch {
    return false;
  }
}

export const stripBom = (text: string): string => (text.charCodeAt(0) === 0xfeff ? text.slice(1) : text);

/**
 * Reads and checks the mapping file: `--mapping` when given, else the nearest one above the working
 * directory, else the nearest one above the first named path (so `cachewright lint other/repo/x.yaml`
 * finds that repository's mapping). Problems come back as `path:line:col: message` lines.
 */
export function resolveMapping(cwd: string, config: string | undefined, paths: readonly string[]): Outcome<Mapping> {
  let mappingPath: string | undefined;
  if (config !== undefined) {
    mappingPath = nodePath.resolve(cwd, config);
  } else {
    mappingPath = findNearestMappingFile(cwd);
    const first = paths[0];
    if (!mappingPath && first !== undefined) {
      const resolved = nodePath.resolve(cwd, first);
      mappingPath = findNearestMappingFile(isFile(resolved) ? nodePath.dirname(resolved) : resolved);
    }
    if (!mappingPath) {
      return fail(`no mapping file (${MAPPING_FILE_NAMES.join(', ')}) in ${displayPath(cwd, cwd) === '.' ? 'this folder' : cwd} or any folder above it; create one or name it with --mapping FILE`);
    }
  }
  const shown = displayPath(mappingPath, cwd);
  let text: string;
  try {
    text = stripBom(readRegularText(mappingPath, { maxBytes: MAPPING_SIZE_LIMIT }));
  } catch (error) {
    return fail(`${shown}: cannot read the mapping file: ${ioMessage(error)}`);
  }
  return loadMappingText(text, mappingPath, shown);
}

/** A mapping file's text read as if it sat at `mappingPath`; problems as `path:line:col: message` lines. */
export function loadMappingText(text: string, mappingPath: string, shown: string = mappingPath): Outcome<Mapping> {
  const load = loadMapping(text, mappingPath);
  if (!load.mapping) {
    const lines = load.problems.map((p) => `${shown}:${p.range.line}:${p.range.column}: ${p.message}`);
    return fail(lines.length > 0 ? lines.join('\n') : `${shown}: the mapping file could not be read`);
  }
  return ok(load.mapping);
}

export interface FileSelection {
  /** Absolute paths, sorted, without duplicates. */
  files: string[];
  /** Named paths that do not exist or cannot be read (absolute path and why). */
  errors: { path: string; message: string }[];
  /** Named folders in which the mapping includes nothing (worth a note, not an error). */
  empty: string[];
}

/** Every file the mapping's include globs reach below its folder, minus its excludes. */
function mappedFiles(mapping: Mapping): string[] {
  const patterns = mapping.file.include ?? DEFAULT_INCLUDE;
  const found = tinyglobby.globSync([...patterns], { cwd: mapping.dir, absolute: true, dot: false, onlyFiles: true, ignore: [...(mapping.file.exclude ?? []), ...NEVER_WALKED] });
  return found.map((p) => nodePath.resolve(p)).filter((p) => mapping.includes(p));
}

/**
 * The files to lint. Without paths: what the mapping includes. A named file is linted even when the
 * mapping does not include it (the user asked for it); a named folder is narrowed to the files in it
 * that the mapping includes.
 */
export function selectFiles(mapping: Mapping, cwd: string, paths: readonly string[]): FileSelection {
  const selection: FileSelection = { files: [], errors: [], empty: [] };
  const seen = new Set<string>();
  const add = (file: string) => {
    if (seen.has(file)) return;
    seen.add(file);
    selection.files.push(file);
  };
  if (paths.length === 0) {
    for (const file of mappedFiles(mapping)) add(file);
  } else {
    let all: string[] | undefined;
    for (const given of paths) {
      const resolved = nodePath.resolve(cwd, given);
      let stat: fs.Stats;
      try {
        stat = fs.statSync(resolved);
      } catch (error) {
        selection.errors.push({ path: resolved, message: ioMessage(error) });
        continue;
      }
      if (stat.isDirectory()) {
        all ??= mappedFiles(mapping);
        const prefix = resolved.endsWith(nodePath.sep) ? resolved : resolved + nodePath.sep;
        const inside = all.filter((file) => file.startsWith(prefix));
        if (inside.length === 0) selection.empty.push(given);
        for (const file of inside) add(file);
      } else {
        add(resolved);
      }
    }
  }
  selection.files.sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
  return selection;
}
