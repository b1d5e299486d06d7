// The layers of docs/architecture.md, enforced: every import in src/ and webview/ is read with the
// TypeScript compiler's parser and checked against the table there. A forbidden import fails with
// the file, the import and the rule it breaks.
import { strict as assert } from 'node:assert';
import * as fs from 'node:fs';
import * as path from 'node:path';
import ts from 'typescript';

const ROOT = path.resolve(__dirname, '../..');

/** Which project layers each layer may import (its own always included). */
const MAY_IMPORT: Record<string, readonly string[]> = {
  core: [],
  model: ['core'],
  rules: ['core', 'model'],
  files: [],
  git: ['core'],
  image: ['core', 'model', 'files'],
  trace: ['core', 'model', 'files'],
  lint: ['core', 'model', 'rules', 'image', 'trace'],
  review: ['core', 'model', 'rules', 'lint'],
  protocol: ['core', 'image'],
  cli: ['core', 'model', 'rules', 'files', 'git', 'image', 'trace', 'lint', 'review', 'protocol'],
  extension: ['core', 'model', 'rules', 'files', 'git', 'image', 'trace', 'lint', 'review', 'protocol'],
  webview: ['core', 'protocol'],
};

/** Outside modules only some layers may use, and why. */
const RESTRICTED: { test: (spec: string) => boolean; what: string; allowed: readonly string[] }[] = [
  { test: (s) => s === 'vscode', what: 'the editor API', allowed: ['extension'] },
  { test: (s) => /^(node:)?fs(\/promises)?$/.test(s), what: 'the file system', allowed: ['files', 'git', 'image', 'trace', 'cli', 'extension'] },
  { test: (s) => /^(node:)?child_process$/.test(s), what: 'running programs (git)', allowed: ['git'] },
  // Pure layers run anywhere, the webview in a browser: no Node built-in at all.
  { test: (s) => s.startsWith('node:'), what: 'a Node built-in', allowed: ['model', 'rules', 'files', 'git', 'image', 'trace', 'lint', 'review', 'cli', 'extension'] },
];

function layerOf(file: string): string | undefined {
  const parts = path.relative(ROOT, file).split(path.sep);
  if (parts[0] === 'webview') return 'webview';
  if (parts[0] !== 'src' || parts.length < 2) return undefined;
  // A file directly in src/ (or the module "src/x" itself) is named by its own name.
  return parts[1]?.replace(/\.ts$/, '');
}

function sourceFiles(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((entry) => {
    const full = path.join(dir, entry.name);
    if (entry.isDirectory()) return sourceFiles(full);
    return entry.name.endsWith('.ts') ? [full] : [];
  });
}

/** Every module specifier a file names: imports, re-exports, import() and require(). */
function specifiersOf(file: string, text = fs.readFileSync(file, 'utf8')): { spec: string; line: number }[] {
  const source = ts.createSourceFile(file, text, ts.ScriptTarget.ES2022, true);
  const out: { spec: string; line: number }[] = [];
  const visit = (node: ts.Node): void => {
    let spec: ts.Expression | undefined;
    if ((ts.isImportDeclaration(node) || ts.isExportDeclaration(node)) && node.moduleSpecifier) spec = node.moduleSpecifier;
    else if (ts.isCallExpression(node) && (node.expression.kind === ts.SyntaxKind.ImportKeyword || (ts.isIdentifier(node.expression) && node.expression.text === 'require'))) spec = node.arguments[0];
    else if (ts.isImportEqualsDeclaration(node) && ts.isExternalModuleReference(node.moduleReference)) spec = node.moduleReference.expression;
    if (spec && ts.isStringLiteralLike(spec)) out.push({ spec: spec.text, line: source.getLineAndCharacterOfPosition(spec.getStart()).line + 1 });
    ts.forEachChild(node, visit);
  };
  visit(source);
  return out;
}

/** The broken rules of one file, as "file:line imports X: rule". */
function layerViolations(file: string, text?: string): string[] {
  const layer = layerOf(file);
  if (!layer) return [];
  const allowed = MAY_IMPORT[layer];
  const where = path.relative(ROOT, file);
  if (!allowed) return [`${where}: ${layer} is not a layer of docs/architecture.md; add it to the table`];
  const out: string[] = [];
  for (const { spec, line } of specifiersOf(file, text)) {
    if (spec.startsWith('.')) {
      const target = layerOf(path.resolve(path.dirname(file), spec));
      if (target === undefined) out.push(`${where}:${line} imports "${spec}": outside src/ and webview/`);
      else if (target !== layer && !allowed.includes(target)) out.push(`${where}:${line} imports "${spec}": ${layer} may import only ${[layer, ...allowed].join(', ')}, not ${target}`);
      continue;
    }
    for (const rule of RESTRICTED) {
      if (rule.test(spec) && !rule.allowed.includes(layer)) out.push(`${where}:${line} imports "${spec}": ${rule.what} is for ${rule.allowed.join(', ')} only, not ${layer}`);
    }
  }
  return out;
}

/** One file-name convention (docs/architecture.md): lower-case words joined by hyphens, then extensions. */
const KEBAB_CASE = /^[a-z0-9]+(-[a-z0-9]+)*(\.[a-z0-9]+)*$/;

/** Every file and folder under dir whose name breaks the convention, relative to the root. */
function misnamed(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((entry) => {
    const full = path.join(dir, entry.name);
    const own = KEBAB_CASE.test(entry.name) ? [] : [path.relative(ROOT, full)];
    return entry.isDirectory() ? [...own, ...misnamed(full)] : own;
  });
}

describe('layers (docs/architecture.md)', () => {
  const files = [...sourceFiles(path.join(ROOT, 'src')), ...sourceFiles(path.join(ROOT, 'webview'))];

  it('every import in src/ and webview/ follows the layer table', () => {
    assert.ok(files.length > 50, `only ${files.length} source files found`);
    const broken = files.flatMap((file) => layerViolations(file));
    assert.deepEqual(broken, [], `imports that break the layer table:\n${broken.join('\n')}`);
  });

  it('a forbidden import is reported with its file and the rule it breaks', () => {
    // A probe file that is never written: its text is handed to the same check.
    const file = path.join(ROOT, 'src', 'core', 'probe', 'probe.ts');
    const broken = layerViolations(file, "import * as fs from 'node:fs';\nimport { lintDocument } from '../../lint';\nexport const probe = [fs, lintDocument];\n");
    assert.equal(broken.length, 3, broken.join('\n'));
    assert.match(broken[0] ?? '', /probe\.ts:1 imports "node:fs": the file system is for files, git, image, trace, cli, extension only, not core/);
    assert.match(broken[2] ?? '', /probe\.ts:2 imports "\.\.\/\.\.\/lint": core may import only core, not lint/);
  });

  it('no file in webview/ imports from src/extension/', () => {
    const upward = files.filter((f) => layerOf(f) === 'webview').flatMap((f) => specifiersOf(f).filter(({ spec }) => path.resolve(path.dirname(f), spec).startsWith(path.join(ROOT, 'src', 'extension'))).map(({ spec }) => `${f}: ${spec}`));
    assert.deepEqual(upward, []);
  });

  it('every file and folder name in src/ and webview/ is kebab-case', () => {
    const broken = [...misnamed(path.join(ROOT, 'src')), ...misnamed(path.join(ROOT, 'webview'))];
    assert.deepEqual(broken, [], `names that are not kebab-case (lower-case words joined by hyphens):\n${broken.join('\n')}`);
  });

  it('the name check accepts kebab-case and refuses other styles', () => {
    for (const good of ['index.ts', 'l2-counter.ts', 'image-viewer', 'block-trace.ts', 'panel.test.ts']) assert.ok(KEBAB_CASE.test(good), good);
    for (const bad of ['panelView.ts', 'imageViewer', 'Panel.ts', 'panel_view.ts', 'panel--view.ts', '-panel.ts']) assert.ok(!KEBAB_CASE.test(bad), bad);
  });
});
