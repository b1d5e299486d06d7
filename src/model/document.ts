// A definition file read with every node's place in the text. YAML and JSON both go through the
// `yaml` package (JSON is read with its JSON schema), which keeps comments and exact offsets.
import { isAlias, isMap, isNode, isScalar, isSeq, parseDocument } from './yaml-functions';
import type { Document, Node, Pair, YAMLMap } from 'yaml';
import type { SourceRange } from '../core/results';
import { LineIndex } from './lines';
import { findJsonSyntaxError } from './json-syntax';
import type { PathSegment } from './jsonpath';

export type DocumentFormat = 'yaml' | 'json';

export interface DocumentProblem {
  message: string;
  range: SourceRange;
}

export interface DefinitionDocument {
  path: string;
  text: string;
  format: DocumentFormat;
  /** The document's data as plain values, for JSONPath. */
  data: unknown;
  tree: Document.Parsed;
  lines: LineIndex;
  /** The line break the file uses, so inserted lines match it. */
  eol: string;
}

export interface ReadResult {
  document?: DefinitionDocument;
  problems: DocumentProblem[];
}

export const formatOf = (path: string): DocumentFormat => (/\.json$/i.test(path) ? 'json' : 'yaml');

function firstLine(message: string): string {
  return (message.split('\n')[0] ?? message).replace(/ at line \d+, column \d+:?$/, '');
}

function jsonSyntaxProblem(text: string, lines: LineIndex): DocumentProblem | undefined {
  const error = findJsonSyntaxError(text);
  if (!error) return undefined;
  return { message: `not valid JSON: ${error.message}`, range: lines.range(error.offset, Math.min(error.offset + 1, text.length)) };
}

/** A YAML alias to an ancestor makes the data contain itself: selectors would walk it forever. */
function isCyclic(root: unknown): boolean {
  const onPath = new Set<object>();
  const done = new Set<object>();
  const walk = (value: unknown): boolean => {
    if (typeof value !== 'object' || value === null || done.has(value)) return false;
    if (onPath.has(value)) return true;
    onPath.add(value);
    const children = value instanceof Map ? [...value.values()] : Object.values(value);
    for (const child of children) if (walk(child)) return true;
    onPath.delete(value);
    done.add(value);
    return false;
  };
  return walk(root);
}

export function readDefinition(path: string, text: string, format: DocumentFormat = formatOf(path)): ReadResult {
  const lines = new LineIndex(text);
  if (format === 'json') {
    const problem = jsonSyntaxProblem(text, lines);
    if (problem) return { problems: [problem] };
  }
  // Merge keys (<<) are a YAML 1.1 habit that hand-written definitions still use; JSON has none.
  // logLevel 'error': the parser's warnings (a collection used as a key) must not reach stderr as
  // process warnings; what matters about the text comes back as problems.
  const tree = parseDocument(text, { schema: format === 'json' ? 'json' : 'core', merge: format !== 'json', prettyErrors: false, uniqueKeys: true, strict: true, logLevel: 'error' });
  const problems: DocumentProblem[] = tree.errors.map((error) => ({
    message: error.code === 'MULTIPLE_DOCS'
      ? 'this file holds more than one YAML document; cachewright reads one definition document per file (split it, or drop the extra "---")'
      : firstLine(error.message),
    range: lines.range(Math.min(error.pos[0], text.length), Math.min(error.pos[1], text.length)),
  }));
  if (problems.length > 0) return { problems };
  let data: unknown;
  try {
    data = tree.toJS({ maxAliasCount: 1000 });
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error);
    return { problems: [{ message: firstLine(message), range: lines.range(0, 0) }] };
  }
  if (text.includes('*') && isCyclic(data)) {
    return { problems: [{ message: 'an alias refers to a node that contains it, so the data never ends', range: lines.range(0, 0) }] };
  }
  const eol = /\r\n/.test(text) ? '\r\n' : '\n';
  return { document: { path, text, format, data, tree, lines, eol }, problems: [] };
}

export interface LocatedNode {
  node: Node;
  /** The pair that holds the node when it is a map value (its key gives the range of the key). */
  pair?: Pair;
  /** Reached through an alias: editing it would change every place that uses the anchor. */
  viaAlias: boolean;
}

function resolve(node: unknown, state: { viaAlias: boolean }, doc: Document.Parsed): unknown {
  if (isAlias(node)) {
    state.viaAlias = true;
    return node.resolve(doc);
  }
  return node;
}

/** The node at a path of map keys and sequence indices. */
export function nodeAt(document: DefinitionDocument, path: readonly PathSegment[]): LocatedNode | undefined {
  const state = { viaAlias: false };
  return walkFrom(document, resolve(document.tree.contents, state, document.tree), state, path);
}

/**
 * The node at a path below a node already found (a disk's values below the disk): the same answer as
 * nodeAt with the two paths joined, without walking down from the root again for every value.
 */
export function nodeBelow(document: DefinitionDocument, start: LocatedNode, path: readonly PathSegment[]): LocatedNode | undefined {
  if (path.length === 0) return start;
  return walkFrom(document, start.node, { viaAlias: start.viaAlias }, path);
}

function walkFrom(document: DefinitionDocument, from: unknown, state: { viaAlias: boolean }, path: readonly PathSegment[]): LocatedNode | undefined {
  let current = from;
  let pair: Pair | undefined;
  for (const segment of path) {
    if (isMap(current)) {
      pair = findPair(current, String(segment), state, document.tree);
      if (!pair) return undefined;
      current = resolve(pair.value, state, document.tree);
    } else if (isSeq(current) && typeof segment === 'number') {
      pair = undefined;
      current = resolve(current.items[segment], state, document.tree);
    } else return undefined;
  }
  if (!isNode(current)) return undefined;
  return { node: current, pair, viaAlias: state.viaAlias };
}

/** A map's own key first, then keys a merge key (<<) brings in, which live at the anchor. */
function findPair(map: YAMLMap, key: string, state: { viaAlias: boolean }, doc: Document.Parsed, depth = 0): Pair | undefined {
  const own = map.items.find((item) => keyText(item.key) === key);
  if (own || depth > 16) return own;
  for (const item of map.items) {
    if (keyText(item.key) !== '<<') continue;
    const sources = isSeq(item.value) ? item.value.items : [item.value];
    for (const source of sources) {
      const inner = { viaAlias: false };
      const resolved = resolve(source, inner, doc);
      if (!isMap(resolved)) continue;
      const found = findPair(resolved, key, inner, doc, depth + 1);
      if (found) {
        state.viaAlias = true;
        return found;
      }
    }
  }
  return undefined;
}

export function keyText(key: unknown): string | undefined {
  if (isScalar(key)) {
    const value = key.value;
    // The yaml package marks a merge key with a symbol.
    return typeof value === 'symbol' ? '<<' : String(value);
  }
  return typeof key === 'string' ? key : undefined;
}

/** The range of a node's value (without trailing comments). */
export function rangeOfNode(document: DefinitionDocument, node: Node): SourceRange {
  const [start, valueEnd] = node.range ?? [0, 0];
  return document.lines.range(start, valueEnd);
}
