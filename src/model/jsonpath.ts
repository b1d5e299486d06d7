// RFC 9535 JSONPath selectors. The library parses every selector (so syntax is exactly the RFC's),
// and evaluates the ones that use filters, slices, unions or descendants. Plain chains of names,
// indices and wildcards, which nearly every mapping file uses, are walked here directly: the
// library re-parses its expression on each call, and a fleet evaluates a dozen fields per disk.
import parseJsonPath from 'jsonpath-rfc9535/parser';
import { exec, type JsonValue } from 'jsonpath-rfc9535';
import { fail, ok, type Outcome } from '../core/result';

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
  const only = node.selectors[0] as AstNode;
  if (only.type === 'NameSelector' && typeof only.value === 'string') return { kind: 'name', name: only.value };
  if (only.type === 'IndexSelector' && typeof only.value === 'number') return { kind: 'index', index: only.value };
  if (only.type === 'WildcardSelector') return { kind: 'wildcard' };
  return undefined;
}

export function compileSelector(expression: string): Outcome<Selector> {
  let ast: { segments?: AstNode[] };
  try {
    ast = (parseJsonPath as unknown as (text: string) => { segments?: AstNode[] })(expression);
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error);
    return fail(`"${expression}" is not an RFC 9535 JSONPath selector: ${message}`);
  }
  const steps: Step[] = [];
  for (const segment of ast.segments ?? []) {
    const step = stepOf(segment);
    if (!step) return ok({ expression });
    steps.push(step);
  }
  const names = steps.every((s) => s.kind === 'name') ? steps.map((s) => (s as { name: string }).name) : undefined;
  return ok({ expression, steps, memberChain: names });
}

/** The library writes member names as normalized paths do (RFC 9535 §2.7): undo that escaping. */
function unescapeName(segment: string | number): string | number {
  if (typeof segment !== 'string' || !segment.includes('\\')) return segment;
  return segment.replace(/\\(u[0-9a-fA-F]{4}|.)/g, (_, code: string) => {
    if (code.length === 5) return String.fromCharCode(parseInt(code.slice(1), 16));
    return ({ b: '\b', f: '\f', n: '\n', r: '\r', t: '\t' } as Record<string, string>)[code] ?? code;
  });
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

/** RFC 6901: "~" is written "~0" and "/" is written "~1". */
export function toJsonPointer(path: readonly PathSegment[]): string {
  return path.map((segment) => `/${String(segment).replace(/~/g, '~0').replace(/\//g, '~1')}`).join('');
}

export function parseJsonPointer(pointer: string): Outcome<PathSegment[]> {
  if (pointer === '') return ok([]);
  if (!pointer.startsWith('/')) return fail(`"${pointer}" is not a JSON Pointer: it must be empty or start with "/"`);
  return ok(pointer.slice(1).split('/').map((part) => part.replace(/~1/g, '/').replace(/~0/g, '~')));
}
