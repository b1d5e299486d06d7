// Rewrites the printed output of every `console` example in README.md and docs/ by running its
// `$ cachewright ...` lines in examples/ with the built CLI (npm run build first). The test suite
// (test/unit/docs-examples.test.ts) then checks the same examples; review the diff before committing.
import { spawnSync } from 'node:child_process';
import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';

const root = new URL('..', import.meta.url).pathname;
// The examples show the demo as `npm run demo` leaves it, with the ledger's trace written.
spawnSync(process.execPath, [join(root, 'scripts', 'demo-traces.mjs')], { cwd: root, stdio: 'inherit' });
const docs = (dir) => readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? docs(join(dir, e.name)) : e.name.endsWith('.md') ? [join(dir, e.name)] : []));

for (const file of [join(root, 'README.md'), ...docs(join(root, 'docs'))]) {
  const text = readFileSync(file, 'utf8');
  const next = text.replace(/```console\n([\s\S]*?)\n```/g, (_, body) => {
    const out = ['```console'];
    for (const line of body.split('\n')) {
      if (!line.startsWith('$ cachewright ')) continue;
      const run = spawnSync('sh', ['-c', `node ../dist/cli.js ${line.slice('$ cachewright '.length)}`], { cwd: join(root, 'examples'), encoding: 'utf8' });
      out.push(line, ...`${run.stdout}${run.stderr}`.replace(/\n+$/, '').split('\n').map((l) => l.trimEnd()));
      if (run.status !== 0) out.push(`[exit ${run.status}]`);
    }
    out.push('```');
    return out.join('\n');
  });
  if (next !== text) {
    writeFileSync(file, next);
    console.log(`updated ${file.slice(root.length)}`);
  }
}
