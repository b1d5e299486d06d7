// Re-reading a definition after a small edit without parsing the whole file again: the edited
// block-sequence item (a disk, say) is parsed alone and spliced into the previous tree, and every
// offset after it moves by the edit's length. The caller checks the result against the rules below
// and reads the whole file whenever any of them does not hold, so the outcome is always what a full
// read would give.
import { isMap, isNode, isSeq, parseDocument, visit, type Node, type YAMLMap, type YAMLSeq } from 'yaml';
import { nodeAt, type DefinitionDocument } from './document';
import type { PathSegment } from './jsonpath';
import { LineIndex } from './lines';

export interface TextChange {
  /** First offset that differs. */
  start: number;
  /** End of the replaced text in the old text, and of its replacement in the new text. */
  oldEnd: number;
  newEnd: number;
  delta: number;
}

export function diffTexts(before: string, after: string): TextChange | undefined {
  if (before === after) return undefined;
  const shorter = Math.min(before.length, after.length);
  let start = 0;
  while (start < shorter && before.charCodeAt(start) === after.charCodeAt(start)) start++;
  let tail = 0;
  while (tail < shorter - start && before.charCodeAt(before.length - 1 - tail) === after.charCodeAt(after.length - 1 - tail)) tail++;
  return { start, oldEnd: before.length - tail, newEnd: after.length - tail, delta: after.length - before.length };
}

/** Whether a document uses anchors, aliases or merge keys: then no part of it can be read alone. */
export function hasSharedNodes(document: DefinitionDocument): boolean {
  let shared = false;
  visit(document.tree, {
    Alias() {
      shared = true;
      return visit.BREAK;
    },
    Node(_key, node) {
      if (node.anchor) {
        shared = true;
        return visit.BREAK;
      }
      return undefined;
    },
  });
  return shared;
}

function lineStartOf(text: string, offset: number): number {
  return text.lastIndexOf('\n', offset - 1) + 1;
}

function afterLineOf(text: string, offset: number): number {
  const newline = text.indexOf('\n', offset);
  return newline === -1 ? text.length : newline + 1;
}

function shiftNode(node: Node, from: number, delta: number): void {
  const range = node.range;
  if (!range) return;
  for (let i = 0; i < range.length; i++) if ((range[i] as number) >= from) (range as number[])[i] = (range[i] as number) + delta;
}

function containerOf(data: unknown, path: readonly PathSegment[]): Record<string | number, unknown> | undefined {
  let current = data;
  for (const segment of path.slice(0, -1)) {
    if (typeof current !== 'object' || current === null) return undefined;
    current = (current as Record<string | number, unknown>)[segment];
  }
  return typeof current === 'object' && current !== null ? (current as Record<string | number, unknown>) : undefined;
}

const canSet = (data: unknown, path: readonly PathSegment[]): boolean => containerOf(data, path) !== undefined && path.length > 0;

function setAt(data: unknown, path: readonly PathSegment[], value: unknown): boolean {
  let current = data;
  for (const segment of path.slice(0, -1)) {
    if (typeof current !== 'object' || current === null) return false;
    current = (current as Record<string | number, unknown>)[segment];
  }
  const last = path.at(-1);
  if (typeof current !== 'object' || current === null || last === undefined) return false;
  (current as Record<string | number, unknown>)[last] = value;
  return true;
}

/**
 * Applies `change` to `previous` by re-reading the block-map item at `itemPath` (an item of a block
 * sequence) from `text`. On success the previous tree and data are updated in place and a document
 * for the new text is returned; undefined means "read the whole file".
 */
export function reparseItem(previous: DefinitionDocument, text: string, change: TextChange, itemPath: readonly PathSegment[]): DefinitionDocument | undefined {
  if (previous.format !== 'yaml') return undefined;
  const index = itemPath.at(-1);
  if (typeof index !== 'number') return undefined;
  const parent = nodeAt(previous, itemPath.slice(0, -1));
  if (!parent || parent.viaAlias || !isSeq(parent.node) || (parent.node as YAMLSeq).flow) return undefined;
  const seq = parent.node as YAMLSeq;
  const item = seq.items[index];
  if (!item || !isMap(item) || (item as YAMLMap).flow || !(item as YAMLMap).range) return undefined;
  const [itemStart, contentEnd] = (item as YAMLMap).range as [number, number, number];
  // The edit must lie inside the item, after its first character.
  if (change.start <= itemStart || change.oldEnd > contentEnd) return undefined;

  const old = previous.text;
  const fragmentStart = lineStartOf(old, itemStart);
  const oldFragmentEnd = afterLineOf(old, Math.max(contentEnd - 1, itemStart));
  const newFragmentEnd = oldFragmentEnd + change.delta;
  if (change.oldEnd >= oldFragmentEnd || newFragmentEnd > text.length) return undefined;
  // The item must still end at a line break, or it has run into what follows it.
  if (newFragmentEnd < text.length && text[newFragmentEnd - 1] !== '\n') return undefined;
  const column = itemStart - fragmentStart;
  const slice = text.slice(fragmentStart, newFragmentEnd);
  if (slice.includes('\t') || /(^|\n)(---|\.\.\.)/.test(slice) || /[&*!%]/.test(slice) || slice.includes('<<')) return undefined;
  // The item's last line must hold content: trailing blank lines belong to what encloses it.
  if (!/\S[^\n]*\n?$/.test(slice)) return undefined;
  // An item whose last line is a comment reaches on to the next item's indentation in a full read.
  if (/(^|\n)[ \t]*#[^\n]*\n?$/.test(slice)) return undefined;
  // An item ending in an empty value (`key:` or `-`) reaches on to the next node in a full read.
  if (/(:|-)\s*(#[^\n]*)?$/.test(slice.trimEnd())) return undefined;
  // The line prefix ("  - ") becomes spaces: the item parses as an indented map, offsets unchanged.
  const fragment = ' '.repeat(column) + slice.slice(column);
  // Every line that is not blank must stay inside the item (a comment further left ends it).
  for (const line of fragment.split('\n')) {
    const content = line.replace(/\r$/, '');
    if (content.trim() === '') continue;
    if (content.length - content.trimStart().length < column) return undefined;
  }
  const parsed = parseDocument(fragment, { schema: 'core', merge: true, prettyErrors: false, uniqueKeys: true, strict: true, logLevel: 'error' });
  if (parsed.errors.length > 0 || parsed.warnings.length > 0) return undefined;
  const contents = parsed.contents;
  if (!contents || !isMap(contents) || (contents as YAMLMap).flow || !contents.range || contents.range[0] !== column) return undefined;
  const value: unknown = parsed.toJS();
  if (!canSet(previous.data, itemPath)) return undefined;
  // A collection that ends with this item ends where the new item ends; any other end inside the
  // item would need a full read to place.
  const oldItemRange = (item as YAMLMap).range as number[];
  const newItemRange = (contents.range as number[]).map((v) => v + fragmentStart);
  const ancestorRanges: number[][] = [];
  for (let depth = 0; depth < itemPath.length - 1; depth++) {
    const ancestor = nodeAt(previous, itemPath.slice(0, depth));
    if (!ancestor || ancestor.viaAlias || !ancestor.node.range) return undefined;
    ancestorRanges.push(ancestor.node.range as number[]);
  }
  ancestorRanges.push(seq.range as number[]);
  if (previous.tree.range) ancestorRanges.push(previous.tree.range as number[]);
  const ends: [number[], number, number][] = [];
  for (const range of ancestorRanges) {
    for (let i = 0; i < range.length; i++) {
      const v = range[i] as number;
      if (v <= itemStart || v > oldFragmentEnd) continue;
      const match = oldItemRange.indexOf(v, 1);
      if (match < 1) {
        if (v === oldFragmentEnd) continue; // ends after the item's last line: it moves with the edit
        return undefined;
      }
      ends.push([range, i, newItemRange[match] as number]);
    }
  }

  // Only now change anything: shift the rest of the tree, then splice the new item in.
  visit(parsed, (_key, node) => {
    if (isNode(node)) shiftNode(node, 0, fragmentStart);
  });
  visit(previous.tree, (_key, node) => {
    if (isNode(node) && node !== item) shiftNode(node, oldFragmentEnd, change.delta);
  });
  const docRange = previous.tree.range as number[] | undefined;
  if (docRange) for (let i = 0; i < docRange.length; i++) if ((docRange[i] as number) >= oldFragmentEnd) docRange[i] = (docRange[i] as number) + change.delta;
  for (const [range, i, v] of ends) range[i] = v;
  seq.items[index] = contents;
  setAt(previous.data, itemPath, value);
  return { ...previous, text, lines: new LineIndex(text), eol: /\r\n/.test(text) ? '\r\n' : '\n' };
}
