// Re-reading a definition after a small edit without parsing the whole file again: the edited
// block-sequence item (a disk, say) is parsed alone and spliced into the previous tree, and every
// offset after it moves by the edit's length. The caller checks the result against the rules below
// and reads the whole file whenever any of them does not hold, so the outcome is always what a full
// read would give (test/unit/incremental.test.ts compares the two on generated edits).
//
// Only the yaml package's public surface is used: node ranges (`[start, value-end, node-end]`) and
// a sequence's `items`. Every write into the previous tree happens in spliceItem, after all checks.
import { isAlias, isMap, isPair, isScalar, isSeq, parseDocument } from './yaml-functions';
import type { Document, Node, Range, YAMLMap, YAMLSeq } from 'yaml';
import { nodeAt, type DefinitionDocument } from './document';
import { valueAtPath, type PathSegment } from './jsonpath';

export interface TextChange {
  /** First offset that differs. */
  start: number;
  /** End of the replaced text in the old text, and of its replacement in the new text. */
  oldEnd: number;
  newEnd: number;
  delta: number;
}

/** Characters compared at once before narrowing down to one: string equality runs natively. */
const DIFF_CHUNK = 512;

/** The one replaced span that turns `before` into `after` (the longest common prefix and suffix kept). */
export function diffTexts(before: string, after: string): TextChange | undefined {
  if (before === after) return undefined;
  const shorter = Math.min(before.length, after.length);
  let start = 0;
  while (start + DIFF_CHUNK <= shorter && before.slice(start, start + DIFF_CHUNK) === after.slice(start, start + DIFF_CHUNK)) start += DIFF_CHUNK;
  while (start < shorter && before.charCodeAt(start) === after.charCodeAt(start)) start++;
  let tail = 0;
  const room = shorter - start;
  while (tail + DIFF_CHUNK <= room && before.slice(before.length - tail - DIFF_CHUNK, before.length - tail) === after.slice(after.length - tail - DIFF_CHUNK, after.length - tail)) tail += DIFF_CHUNK;
  while (tail < room && before.charCodeAt(before.length - 1 - tail) === after.charCodeAt(after.length - 1 - tail)) tail++;
  return { start, oldEnd: before.length - tail, newEnd: after.length - tail, delta: after.length - before.length };
}

/** Calls `each` on every node under `node` (itself included), keys of pairs too; stops when it returns true. */
function someNode(node: unknown, each: (node: Node) => boolean): boolean {
  if (isScalar(node) || isAlias(node)) return each(node);
  if (isMap(node)) {
    if (each(node)) return true;
    for (const pair of node.items) if (someNode(pair.key, each) || someNode(pair.value, each)) return true;
    return false;
  }
  if (isSeq(node)) {
    if (each(node)) return true;
    for (const item of node.items) if (someNode(isPair(item) ? item.value : item, each) || (isPair(item) && someNode(item.key, each))) return true;
  }
  return false;
}

/** Whether a document uses anchors, aliases or merge keys: then no part of it can be read alone. */
export function hasSharedNodes(document: DefinitionDocument): boolean {
  return someNode(document.tree.contents, (node) => isAlias(node) || Boolean(node.anchor));
}

function lineStartOf(text: string, offset: number): number {
  return text.lastIndexOf('\n', offset - 1) + 1;
}

function afterLineOf(text: string, offset: number): number {
  const newline = text.indexOf('\n', offset);
  return newline === -1 ? text.length : newline + 1;
}

const PARSE_OPTIONS = { schema: 'core', merge: true, prettyErrors: false, uniqueKeys: true, strict: true, logLevel: 'error' } as const;

/** Whether a range's value moves: at or after `from`. */
const moves = (value: number, from: number): boolean => value >= from;

/** Adds `delta` to every offset at or after `from` in the ranges of `node` and everything under it. */
function shiftTree(node: unknown, from: number, delta: number): void {
  const shift = (target: Node): boolean => {
    const range = target.range;
    if (!range) return false;
    if (moves(range[0], from)) range[0] += delta;
    if (moves(range[1], from)) range[1] += delta;
    if (moves(range[2], from)) range[2] += delta;
    return false;
  };
  const walk = (current: unknown): void => {
    if (isScalar(current) || isAlias(current)) {
      shift(current);
      return;
    }
    if (!isMap(current) && !isSeq(current)) return;
    // A collection holds its items: one that ends before `from` has nothing to move inside.
    const end = current.range?.[2];
    if (end !== undefined && end < from) return;
    shift(current);
    for (const item of current.items) {
      if (isPair(item)) {
        walk(item.key);
        walk(item.value);
      } else walk(item);
    }
  };
  walk(node);
}

/** What spliceItem changes: all of it decided before anything is written. */
interface SplicePlan {
  tree: Document.Parsed;
  seq: YAMLSeq;
  index: number;
  /** The item read alone, its offsets counted from the fragment's start. */
  replacement: YAMLMap;
  fragmentStart: number;
  /** Offsets at or after this (in the old text) move by `delta`. */
  oldFragmentEnd: number;
  delta: number;
  /** Ends of enclosing collections that sat at one of the old item's ends: each takes the new item's. */
  ends: { range: Range; slot: 0 | 1 | 2; value: number }[];
  /** The data's array that holds the item, and the item's new value. */
  container: unknown[];
  value: unknown;
}

/**
 * The one place that writes into a previous tree: moves every offset after the edited item, puts the
 * item read alone in its place (its offsets moved to where it sits in the file) and sets its value in
 * the data.
 */
function spliceItem(plan: SplicePlan): void {
  const { tree, seq, index, replacement, fragmentStart, oldFragmentEnd, delta } = plan;
  shiftTree(replacement, 0, fragmentStart);
  seq.items[index] = undefined; // the old item is replaced: it must not move with the rest
  shiftTree(tree.contents, oldFragmentEnd, delta);
  const documentRange = tree.range;
  for (const slot of [0, 1, 2] as const) if (moves(documentRange[slot], oldFragmentEnd)) documentRange[slot] += delta;
  for (const { range, slot, value } of plan.ends) range[slot] = value;
  seq.items[index] = replacement;
  plan.container[index] = plan.value;
}

/**
 * Applies `change` to `previous` by re-reading the block-map item at `itemPath` (an item of a block
 * sequence) from `text`. On success the previous tree and data are updated in place and a document
 * for the new text is returned; undefined means "read the whole file" (nothing was changed then).
 */
export function reparseItem(previous: DefinitionDocument, text: string, change: TextChange, itemPath: readonly PathSegment[]): DefinitionDocument | undefined {
  const plan = planSplice(previous, text, change, itemPath);
  if (!plan) return undefined;
  spliceItem(plan);
  return { ...previous, text, lines: previous.lines.edited(text, change), eol: eolAfter(previous, text, change) };
}

/** The file's line break after an edit: read the whole text again only when the edit touches a line break. */
function eolAfter(previous: DefinitionDocument, text: string, change: TextChange): string {
  const touched = previous.text.slice(Math.max(0, change.start - 1), change.oldEnd + 1) + text.slice(Math.max(0, change.start - 1), change.newEnd + 1);
  if (!/[\r\n]/.test(touched)) return previous.eol;
  return /\r\n/.test(text) ? '\r\n' : '\n';
}

function planSplice(previous: DefinitionDocument, text: string, change: TextChange, itemPath: readonly PathSegment[]): SplicePlan | undefined {
  if (previous.format !== 'yaml') return undefined;
  const index = itemPath.at(-1);
  if (typeof index !== 'number') return undefined;
  const parentPath = itemPath.slice(0, -1);
  const parent = nodeAt(previous, parentPath);
  if (!parent || parent.viaAlias || !isSeq(parent.node) || parent.node.flow) return undefined;
  const seq = parent.node;
  const item = seq.items[index];
  if (!isMap(item) || item.flow || !item.range) return undefined;
  const oldItemRange = item.range;
  const [itemStart, contentEnd] = oldItemRange;
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
  const parsed = parseDocument(fragment, PARSE_OPTIONS);
  if (parsed.errors.length > 0 || parsed.warnings.length > 0) return undefined;
  const replacement = parsed.contents;
  if (!isMap(replacement) || replacement.flow || !replacement.range || replacement.range[0] !== column) return undefined;
  const container = valueAtPath(previous.data, parentPath);
  if (!Array.isArray(container) || index >= container.length) return undefined;
  const value: unknown = parsed.toJS();
  // A collection that ends with this item ends where the new item ends; any other end inside the
  // item would need a full read to place.
  const newItemRange = replacement.range.map((v) => v + fragmentStart);
  const ancestorRanges: Range[] = [];
  for (let depth = 0; depth < parentPath.length; depth++) {
    const ancestor = nodeAt(previous, parentPath.slice(0, depth));
    if (!ancestor || ancestor.viaAlias || !ancestor.node.range) return undefined;
    ancestorRanges.push(ancestor.node.range);
  }
  if (!seq.range) return undefined;
  ancestorRanges.push(seq.range, previous.tree.range);
  const ends: SplicePlan['ends'] = [];
  for (const range of ancestorRanges) {
    for (const slot of [0, 1, 2] as const) {
      const v = range[slot];
      if (v <= itemStart || v > oldFragmentEnd) continue;
      const match = oldItemRange.indexOf(v, 1);
      const moved = newItemRange[match];
      if (match < 1 || moved === undefined) {
        if (v === oldFragmentEnd) continue; // ends after the item's last line: it moves with the edit
        return undefined;
      }
      ends.push({ range, slot, value: moved });
    }
  }
  return { tree: previous.tree, seq, index, replacement, fragmentStart, oldFragmentEnd, delta: change.delta, ends, container, value };
}
