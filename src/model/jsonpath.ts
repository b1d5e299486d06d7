// RFC 9535 JSONPath selectors. The library parses every selector (so syntax is exactly the RFC's),
// and evaluates the ones that use filters, slices, unions or descendants. Plain chains of names,
// indices and wildcards, which nearly every mapping file uses, are walked here directly: the
// library re-parses its expression on each call, and a fleet evaluates a dozen fields per disk.
import parseJsonPath from 'jsonpath-rfc9535/parser';
import { exec, type JsonValue } from 'jsonpath-rfc9535';
import { fail, ok, type Outcome } from '../core/results';

export type PathSegment = string | number;

type Step = { kind: 'name'; name: string } | { kind: 'index'; index: number } | { kind: 'wildcard' };

export interface Selector {
  expression: string;
  /** Set when the selector is a plain chain the fast walker handles. */
  steps?: Step[];
  /** Set when every step is a member name: the keys a fix may create when the value is absent. */
  memberChain?: string[];
}

export interface Match {
  path: PathSegment[];
  value: unknown;
}

interface AstNode {
  type: string;
  value?: unknown;
  node?: AstNode;
  selectors?: AstNode[];
}

function stepOf(segment: AstNode): Step | undefined {
  if (segment.type !== 'ChildSegment' || !segment.node) return undefined;
  const node = segment.node;
  if (node.type === 'MemberNameShorthand' && typeof node.value === 'string') return { kind: 'name', name: node.value };
  if (node.type === 'WildcardSelector') return { kind: 'wildcard' };
  if (node.type !== 'BracketedSelection' || node.selectors?.length !== 1) return undefined;
  const only = node.selectors[0];
  if (!only) return undefined;
  if (only.type === 'NameSelector' && typeof only.value === 'string') return { kind: 'name', name: only.value };
  if (only.type === 'IndexSelector' && typeof only.value === 'number') return { kind: 'index', index: only.value };
  if (only.type === 'WildcardSelector') return { kind: 'wildcard' };
  return undefined;
}

export function compileSelector(expression: string): Outcome<Selector> {
  let ast: { segments?: AstNode[] };
  try {
    ast = parseJsonPath(expression);
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error);
    return fail(`"${expression}" is not an RFC 9535 JSONPath selector: ${message}`);
  }
  const typeProblem = wellTypedness(ast);
  if (typeProblem) return fail(`"${expression}" is not a well-typed RFC 9535 JSONPath selector: ${typeProblem}`);
  const steps: Step[] = [];
  for (const segment of ast.segments ?? []) {
    const step = stepOf(segment);
    if (!step) return ok({ expression });
    steps.push(step);
  }
  const names = steps.flatMap((s) => (s.kind === 'name' ? [s.name] : []));
  const memberChain = names.length === steps.length ? names : undefined;
  return ok({ expression, steps, memberChain });
}

const ESCAPED: Readonly<Record<string, string>> = { b: '\b', f: '\f', n: '\n', r: '\r', t: '\t' };

/** The library writes member names as normalized paths do (RFC 9535 §2.7): undo that escaping. */
function unescapeName(segment: string | number): string | number {
  if (typeof segment !== 'string' || !segment.includes('\\')) return segment;
  return segment.replace(/\\(u[0-9a-fA-F]{4}|.)/g, (_, code: string) => {
    if (code.length === 5) return String.fromCharCode(parseInt(code.slice(1), 16));
    return ESCAPED[code] ?? code;
  });
}

// ---- RFC 9535 §2.4.3 type system for function extensions (the library parses but does not check it) ----

type FunctionType = 'ValueType' | 'LogicalType' | 'NodesType';
const FUNCTIONS: Record<string, { params: FunctionType[]; result: FunctionType }> = {
  length: { params: ['ValueType'], result: 'ValueType' },
  count: { params: ['NodesType'], result: 'ValueType' },
  match: { params: ['ValueType', 'ValueType'], result: 'LogicalType' },
  search: { params: ['ValueType', 'ValueType'], result: 'LogicalType' },
  value: { params: ['NodesType'], result: 'ValueType' },
};

interface TypedNode {
  type?: string;
  name?: string;
  arguments?: TypedNode[];
  value?: unknown;
  segments?: TypedNode[];
  node?: TypedNode;
  selectors?: TypedNode[];
  left?: TypedNode;
  right?: TypedNode;
  expression?: TypedNode;
}

/**
 * A node of the parser's syntax tree as the type check reads it, taken apart field by field: the
 * selector is the user's text, so nothing about the tree it parses to is assumed.
 */
function typedNode(value: unknown): TypedNode | undefined {
  if (!isObject(value)) return undefined;
  const text = (field: unknown): string | undefined => (typeof field === 'string' ? field : undefined);
  const list = (field: unknown): TypedNode[] | undefined => (Array.isArray(field) ? field.flatMap((item) => typedNode(item) ?? []) : undefined);
  return {
    type: text(value.type),
    name: text(value.name),
    value: value.value,
    arguments: list(value.arguments),
    segments: list(value.segments),
    selectors: list(value.selectors),
    node: typedNode(value.node),
    left: typedNode(value.left),
    right: typedNode(value.right),
    expression: typedNode(value.expression),
  };
}

/** A query of name and index selectors in child segments selects at most one node [RFC 9535 §2.3.5.1]. */
function isSingular(query: TypedNode | undefined): boolean {
  if (!query) return false;
  if (query.type === 'RelSingularQuery' || query.type === 'AbsSingularQuery') return true;
  if (query.type === 'FilterQuery') return isSingular(typedNode(query.value));
  return (query.segments ?? []).every((segment) => {
    if (segment.type === 'SingularQuerySegment') return true;
    if (segment.type !== 'ChildSegment' || !segment.node) return false;
    const n = segment.node;
    if (n.type === 'MemberNameShorthand') return true;
    return n.type === 'BracketedSelection' && n.selectors?.length === 1 && ['NameSelector', 'IndexSelector'].includes(n.selectors[0]?.type ?? '');
  });
}

const isQuery = (node: TypedNode): boolean => ['FilterQuery', 'RelQuery', 'JsonPathQuery', 'RelSingularQuery', 'AbsSingularQuery'].includes(node.type ?? '');
const resultOf = (node: TypedNode): FunctionType | undefined => (node.type === 'FunctionExpr' ? FUNCTIONS[node.name ?? '']?.result : undefined);

/** Whether `node` may stand where `wanted` is expected. */
function fits(node: TypedNode, wanted: FunctionType): boolean {
  const result = resultOf(node);
  if (wanted === 'ValueType') return node.type === 'Literal' || (isQuery(node) && isSingular(node)) || result === 'ValueType';
  if (wanted === 'NodesType') return isQuery(node) || result === 'NodesType';
  return isQuery(node) || result === 'LogicalType' || result === 'NodesType' || /Logical|Comparison|Test/.test(node.type ?? '');
}

function wellTypedness(root: unknown): string | undefined {
  const stack: unknown[] = [root];
  while (stack.length > 0) {
    const current = stack.pop();
    if (typeof current !== 'object' || current === null) continue;
    if (Array.isArray(current)) {
      stack.push(...current);
      continue;
    }
    const node = typedNode(current);
    if (!node) continue;
    if (node.type === 'FunctionExpr') {
      const signature = FUNCTIONS[node.name ?? ''];
      if (!signature) return `unknown function ${node.name}() (RFC 9535 defines length, count, match, search and value)`;
      const args = node.arguments ?? [];
      if (args.length !== signature.params.length) return `${node.name}() takes ${signature.params.length} argument(s)`;
      const bad = args.findIndex((arg, i) => { const wanted = signature.params[i]; return wanted !== undefined && !fits(arg, wanted); });
      if (bad !== -1) return `argument ${bad + 1} of ${node.name}() must be of ${signature.params[bad]}${signature.params[bad] === 'ValueType' ? ' (a literal, a singular query or a value function)' : ''}`;
    } else if (node.type === 'ComparisonExpr') {
      for (const side of [node.left, node.right]) {
        if (side && !fits(side, 'ValueType')) return 'both sides of a comparison must be a literal, a singular query or a function of ValueType';
      }
    } else if (node.type === 'TestExpr' && node.expression && resultOf(node.expression) === 'ValueType') {
      return `${node.expression.name}() gives a value, which cannot be tested on its own; compare it instead`;
    }
    for (const value of Object.values(current)) if (typeof value === 'object' && value !== null) stack.push(value);
  }
  return undefined;
}

const isObject = (value: unknown): value is Record<string, unknown> =>
  typeof value === 'object' && value !== null && !Array.isArray(value);

/** The nodes a selector picks out of `root`, in document order, with their paths from `root`. */
export function select(selector: Selector, root: unknown): Match[] {
  if (!selector.steps) {
    const matches: Match[] = [];
    exec(root as JsonValue, selector.expression, (value, path) => matches.push({ value, path: path.map(unescapeName) }));
    return matches;
  }
  let current: Match[] = [{ path: [], value: root }];
  for (const step of selector.steps) {
    const next: Match[] = [];
    for (const { path, value } of current) {
      if (step.kind === 'name') {
        if (isObject(value) && Object.prototype.hasOwnProperty.call(value, step.name)) next.push({ path: [...path, step.name], value: value[step.name] });
      } else if (step.kind === 'index') {
        if (Array.isArray(value)) {
          const index = step.index < 0 ? value.length + step.index : step.index;
          if (index >= 0 && index < value.length) next.push({ path: [...path, index], value: value[index] });
        }
      } else if (Array.isArray(value)) {
        value.forEach((item, index) => next.push({ path: [...path, index], value: item }));
      } else if (isObject(value)) {
        for (const key of Object.keys(value)) next.push({ path: [...path, key], value: value[key] });
      }
    }
    current = next;
  }
  return current;
}

/** The plain value at a path of keys and indices, or undefined. */
export function valueAtPath(data: unknown, path: readonly PathSegment[]): unknown {
  let current = data;
  for (const segment of path) {
    if (Array.isArray(current)) current = current[Number(segment)];
    else if (isObject(current)) current = current[String(segment)];
    else return undefined;
  }
  return current;
}

/** Whether a JSON Pointer lies at or under a scope pointer (RFC 6901; the empty scope is the whole document). */
export function pointerWithin(pointer: string, scope: string): boolean {
  return scope === '' || pointer === scope || pointer.startsWith(`${scope}/`);
}

/** RFC 6901: "~" is written "~0" and "/" is written "~1". */
export function toJsonPointer(path: readonly PathSegment[]): string {
  let pointer = '';
  for (const segment of path) {
    const text = String(segment);
    // Most keys hold neither character: skip the two replacements (this runs for every value of every disk).
    pointer += `/${text.includes('~') || text.includes('/') ? text.replace(/~/g, '~0').replace(/\//g, '~1') : text}`;
  }
  return pointer;
}

export function parseJsonPointer(pointer: string): Outcome<PathSegment[]> {
  if (pointer === '') return ok([]);
  if (!pointer.startsWith('/')) return fail(`"${pointer}" is not a JSON Pointer: it must be empty or start with "/"`);
  return ok(pointer.slice(1).split('/').map((part) => part.replace(/~1/g, '/').replace(/~0/g, '~')));
}
