// Reading a definition: its text parsed with ranges, its machines and disks extracted, and the image
// files those disks name (what a caller reads before linting). A text that does not parse gives a
// report of parse errors alone.
import * as nodePath from 'node:path';
import type { SourceRange } from '../core/results';
import { formatSize } from '../core/format';
import { readDefinition, type DefinitionDocument, type ReadResult } from '../model/document';
import { extractMachines, type Extraction, type MachineSpec } from '../model/disks';
import type { Mapping } from '../model/mapping';
import { ruleOf, say, wordingOf } from '../rules';
import { exactBytes } from '../rules/format';
import type { SourceFile } from './prepare';
import type { FileReport } from './report';

/** A definition read and its disks extracted, before any rule runs. */
export interface PreparedDocument {
  file: SourceFile;
  mapping: Mapping;
  read: ReadResult;
  extraction?: Extraction;
  /** Absolute paths of the image files the disks name: what a caller reads before linting. */
  imagePaths: string[];
}

/** Absolute paths of the image files the qcow2 disks of a definition name. */
export function imagePathsOf(definitionPath: string, machines: readonly MachineSpec[]): string[] {
  const dir = nodePath.dirname(definitionPath);
  return machines.flatMap((m) => m.disks.flatMap((d) => (d.isQcow2 && d.values.image ? [nodePath.resolve(dir, d.values.image.value)] : [])));
}

export function prepareDocument(file: SourceFile, mapping: Mapping): PreparedDocument {
  const read = readDefinition(file.path, file.text);
  if (!read.document) return { file, mapping, read, imagePaths: [] };
  const extraction = extractMachines(read.document, mapping);
  return { file, mapping, read, extraction, imagePaths: imagePathsOf(file.path, extraction.machines) };
}

/** The report of a text that does not parse: its parse errors, nothing else. */
export function unparsedReport(path: string, problems: readonly { message: string; range: SourceRange }[]): FileReport {
  const wording = wordingOf('parse-error');
  return parseErrorReport(path, problems.map((p) => ({ message: say(wording, 'unreadable', { problem: p.message }), range: p.range })));
}

/** A report of parse-error findings alone, their texts already said. */
function parseErrorReport(path: string, findings: readonly { message: string; range: SourceRange }[]): FileReport {
  const rule = ruleOf('parse-error');
  return {
    path,
    disks: [],
    machines: [],
    findings: findings.map((f) => ({ rule: rule.id, severity: 'error' as const, message: f.message, pointer: '', range: f.range })),
    fileFindings: findings.map((_, index) => index),
    parsed: false,
  };
}

/**
 * A definition file above the size limit, left unread: one parse-error finding at its start that
 * names its size and the limit; `raise` says how to change the limit in the front end at hand.
 */
export function oversizedFileReport(path: string, size: bigint, limit: bigint, raise: string): FileReport {
  const at: SourceRange = { offset: 0, length: 0, line: 1, column: 1, endLine: 1, endColumn: 1 };
  const message = say(wordingOf('parse-error'), 'tooLarge', { file: nodePath.basename(path), size: formatSize(size), bytes: exactBytes(size), limit: formatSize(limit), raise });
  return parseErrorReport(path, [{ message, range: at }]);
}

/** The first line of a node: where findings about a whole disk or machine are shown. */
export function headRange(document: DefinitionDocument, range: SourceRange): SourceRange {
  const lineText = document.lines.lineText(range.line);
  const end = document.lines.lineStart(range.line) + lineText.replace(/\s+(#.*)?$/, '').length;
  return document.lines.range(range.offset, Math.max(range.offset, Math.min(end, range.offset + range.length)));
}
