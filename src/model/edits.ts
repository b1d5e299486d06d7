// Fixes as data: the smallest text edits that set a value in place or insert a missing key, written
// in the file's own style (YAML block or flow, JSON with its indentation, the unit style the file
// uses), so everything the fix does not mean to change keeps its bytes.
import { isMap, isNode, isScalar } from './yaml-functions';
import type { Node, Pair } from 'yaml';
import type { TextEdit } from '../core/results';
import { formatSizeExact, sizeStyleOf, type SizeStyle } from '../core/units';
import { keyText, type DefinitionDocument } from './document';
import { atIndex } from '../core/indexed';

/**
 * How many rounds of "apply the fixes that do not overlap, lint again" a fix-all runs (CLI --fix and
 * the editor's fix-all alike): fixes that touch the same map need a fresh lint in between.
 */
export const FIX_PASSES = 10;

export type NewValue = { kind: 'size'; bytes: bigint } | { kind: 'interval'; seconds: number } | { kind: 'boolean'; value: boolean };

/** The style a file uses for sizes: the first size written with a unit, else plain bytes. */
export function documentSizeStyle(examples: readonly unknown[]): SizeStyle | undefined {
  for (const example of examples) {
    const style = sizeStyleOf(example);
    if (style && style.kind !== 'bytes') return style;
  }
  return examples.length > 0 && examples.every((e) => typeof e === 'number') ? { kind: 'bytes', space: false } : undefined;
}

/** The value as plain data text: a number (bytes, seconds), a unit string, or a boolean. */
function valueText(value: NewValue, style: SizeStyle | undefined): { text: string; isString: boolean } {
  if (value.kind === 'boolean') return { text: String(value.value), isString: false };
  if (value.kind === 'interval') return { text: String(value.seconds), isString: false };
  const text = formatSizeExact(value.bytes, style);
  return { text, isString: !/^\d+$/.test(text) };
}

function quoteFor(document: DefinitionDocument, node: Node | undefined): '"' | "'" | '' {
  if (document.format === 'json') return '"';
  if (node && isScalar(node)) {
    const type = node.type;
    if (type === 'QUOTE_DOUBLE') return '"';
    if (type === 'QUOTE_SINGLE') return "'";
  }
  return '';
}

function render(document: DefinitionDocument, value: NewValue, style: SizeStyle | undefined, like?: Node, keepString = false): string {
  const { text, isString } = valueText(value, style);
  // A value written as a string stays a string, even when the new one is plain bytes.
  if (!isString && !(keepString && quoteFor(document, like) !== '')) return text;
  const quote = quoteFor(document, like);
  return `${quote}${text}${quote}`;
}

/** Replace a scalar value in place, keeping its quoting and unit style. */
export function replaceValueEdit(document: DefinitionDocument, node: Node, raw: unknown, value: NewValue, fileStyle?: SizeStyle): TextEdit | undefined {
  const [start, end] = node.range ?? [];
  if (start === undefined || end === undefined || !isScalar(node)) return undefined;
  if (node.type === 'BLOCK_LITERAL' || node.type === 'BLOCK_FOLDED') return undefined;
  const style = value.kind === 'size' ? (sizeStyleOf(raw) ?? fileStyle) : undefined;
  // A value written as a plain number stays a number; a string keeps its unit style.
  const effectiveStyle = typeof raw === 'number' ? { kind: 'bytes' as const, space: false } : style;
  return { offset: start, length: end - start, text: render(document, value, effectiveStyle, node, typeof raw === 'string') };
}

/** Where a pair's key or value sits, when it is a node (a pair may hold plain values). */
const rangeOf = (value: unknown): Node['range'] | undefined => (isNode(value) ? value.range : undefined);

const yamlKey = (key: string): string => (/^[A-Za-z_][\w.-]*$/.test(key) ? key : JSON.stringify(key));
const jsonKey = (key: string): string => JSON.stringify(key);

function lineStartOf(text: string, offset: number): number {
  return text.lastIndexOf('\n', offset - 1) + 1;
}

function lineEndOf(text: string, offset: number): number {
  const newline = text.indexOf('\n', offset);
  const end = newline === -1 ? text.length : newline;
  return end > 0 && text[end - 1] === '\r' ? end - 1 : end;
}

/** End of the last non-blank character at or before `offset`. */
function backOverSpace(text: string, offset: number): number {
  let i = offset;
  while (i > 0 && /\s/.test(atIndex(text, i - 1))) i--;
  return i;
}

function indentUnit(document: DefinitionDocument): string {
  const match = /\n([ \t]+)\S/.exec(document.text);
  if (!match) return '  ';
  const first = atIndex(match, 1);
  return first.startsWith('\t') ? '\t' : first.length >= 2 && first.length <= 8 ? ' '.repeat(Math.min(first.length, 4)) : '  ';
}

function nestedBlock(keys: readonly string[], leaf: string, indent: string, unit: string, eol: string, json: boolean): string {
  const [first, ...rest] = keys;
  if (first === undefined) return leaf;
  const key = json ? jsonKey(first) : yamlKey(first);
  if (rest.length === 0) return `${key}: ${leaf}`;
  if (json) return `${key}: {${eol}${indent}${unit}${nestedBlock(rest, leaf, indent + unit, unit, eol, json)}${eol}${indent}}`;
  return `${key}:${eol}${indent}${unit}${nestedBlock(rest, leaf, indent + unit, unit, eol, json)}`;
}

function inlineNested(keys: readonly string[], leaf: string, json: boolean): string {
  const [first, ...rest] = keys;
  if (first === undefined) return leaf;
  const key = json ? jsonKey(first) : yamlKey(first);
  return rest.length === 0 ? `${key}: ${leaf}` : `${key}: { ${inlineNested(rest, leaf, json)} }`;
}

/**
 * Insert `keys` (a chain of member names, the last one holding the value) into the map `base`,
 * reusing the part of the chain that already exists. Returns undefined where a fix cannot be
 * written safely (a non-map on the way, an empty value, an aliased node).
 */
export function insertFieldEdit(document: DefinitionDocument, base: Node, keys: readonly string[], value: NewValue, fileStyle?: SizeStyle): TextEdit | undefined {
  let map: Node = base;
  let depth = 0;
  while (depth < keys.length - 1 && isMap(map)) {
    const pair = map.items.find((item: Pair) => keyText(item.key) === keys[depth]);
    if (!pair) break;
    if (!pair.value || !isMap(pair.value)) return undefined;
    map = pair.value;
    depth++;
  }
  if (!isMap(map)) return undefined;
  const remaining = keys.slice(depth);
  const json = document.format === 'json';
  const leaf = render(document, value, value.kind === 'size' ? fileStyle : undefined);
  const { text, eol } = document;
  const items = map.items;
  const [start, end] = map.range ?? [];
  if (start === undefined || end === undefined) return undefined;
  const flow = map.flow === true || json;
  const last = items.at(-1);

  if (flow) {
    const close = text.lastIndexOf('}', end - 1);
    if (close < start) return undefined;
    if (!last) return { offset: close, length: 0, text: inlineNested(remaining, leaf, json) };
    const lastEnd = rangeOf(last.value)?.[1] ?? rangeOf(last.key)?.[1];
    if (lastEnd === undefined) return undefined;
    const multiline = text.slice(start, close).includes('\n');
    if (!multiline) return { offset: lastEnd, length: 0, text: `, ${inlineNested(remaining, leaf, json)}` };
    const keyStart = rangeOf(last.key)?.[0] ?? lastEnd;
    const lineStart = lineStartOf(text, keyStart);
    const indent = text.slice(lineStart, keyStart);
    if (!/^[ \t]*$/.test(indent)) return { offset: lastEnd, length: 0, text: `, ${inlineNested(remaining, leaf, json)}` };
    return { offset: lastEnd, length: 0, text: `,${eol}${indent}${json ? nestedBlock(remaining, leaf, indent, indentUnit(document), eol, json) : inlineNested(remaining, leaf, false)}` };
  }

  if (!last) return undefined;
  const keyStart = rangeOf(last.key)?.[0];
  if (keyStart === undefined) return undefined;
  const lineStart = lineStartOf(text, keyStart);
  let indent = text.slice(lineStart, keyStart).replace(/^\uFEFF/, '');
  // A map that is a sequence item begins after "- ": its keys line up one column past the dash.
  if (!/^[ \t]*$/.test(indent)) indent = indent.replace(/[^\t]/g, ' ');
  const contentEnd = backOverSpace(text, end);
  const at = lineEndOf(text, contentEnd);
  return { offset: at, length: 0, text: `${eol}${indent}${nestedBlock(remaining, leaf, indent, indentUnit(document), eol, false)}` };
}

/** Apply edits (sorted, non-overlapping) to a text. */
export function applyEdits(text: string, edits: readonly TextEdit[]): string {
  const sorted = [...edits].sort((a, b) => b.offset - a.offset || b.length - a.length);
  let result = text;
  for (const edit of sorted) result = result.slice(0, edit.offset) + edit.text + result.slice(edit.offset + edit.length);
  return result;
}

/** Keeps the first of any edits that overlap or touch the same insertion point, in order. */
export function nonOverlapping<T extends { edits: readonly TextEdit[] }>(fixes: readonly T[]): { chosen: T[]; deferred: T[] } {
  const taken: TextEdit[] = [];
  const chosen: T[] = [];
  const deferred: T[] = [];
  const clash = (a: TextEdit, b: TextEdit) =>
    a.offset < b.offset + b.length && b.offset < a.offset + a.length ? true : a.offset === b.offset || a.offset + a.length === b.offset || b.offset + b.length === a.offset;
  for (const fix of fixes) {
    const same = fix.edits.every((e) => taken.some((t) => t.offset === e.offset && t.length === e.length && t.text === e.text));
    if (same) continue; // the same edit from two findings: one edit
    if (fix.edits.some((e) => taken.some((t) => clash(e, t)))) deferred.push(fix);
    else {
      taken.push(...fix.edits);
      chosen.push(fix);
    }
  }
  return { chosen, deferred };
}
