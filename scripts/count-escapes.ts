// Counts the type system's escape hatches in src/ and webview/ as compiler nodes: `as` casts
// (not `as const`), angle-bracket assertions and non-null assertions (`x!`). Prints the totals and
// the files with the most, so a change can say how many it removed.
import * as fs from 'node:fs';
import * as path from 'node:path';
import ts from 'typescript';

const root = path.resolve(__dirname, '..');
const files: string[] = [];
const walk = (dir: string): void => {
  for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
    const full = path.join(dir, entry.name);
    if (entry.isDirectory()) walk(full);
    else if (entry.name.endsWith('.ts')) files.push(full);
  }
};
walk(path.join(root, 'src'));
walk(path.join(root, 'webview'));

let casts = 0;
let nonNull = 0;
const perFile: [string, number, number][] = [];
for (const file of files) {
  const source = ts.createSourceFile(file, fs.readFileSync(file, 'utf8'), ts.ScriptTarget.ES2022, true);
  let c = 0;
  let n = 0;
  const visit = (node: ts.Node): void => {
    if (ts.isAsExpression(node) || ts.isTypeAssertionExpression(node)) {
      const isConst = ts.isTypeReferenceNode(node.type) && node.type.typeName.getText(source) === 'const';
      if (!isConst) c++;
    } else if (ts.isNonNullExpression(node)) n++;
    ts.forEachChild(node, visit);
  };
  visit(source);
  casts += c;
  nonNull += n;
  if (c + n > 0) perFile.push([path.relative(root, file), c, n]);
}
console.log(`as casts: ${casts}  non-null assertions: ${nonNull}  (${files.length} files in src/ and webview/)`);
if (process.argv.includes('--files')) for (const [file, c, n] of perFile.sort((a, b) => b[1] + b[2] - a[1] - a[2])) console.log(`${String(c).padStart(4)} ${String(n).padStart(4)}  ${file}`);
