// npm run package: builds the release bundles and packs the extension into cachewright-VERSION.vsix.
// vsce runs with no standard input (it would stop to ask about a missing LICENSE or repository).
import { execFileSync } from 'node:child_process';
import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';

const manifest = JSON.parse(readFileSync('package.json', 'utf8'));
const out = `${manifest.name}-${manifest.version}.vsix`;
try {
  execFileSync(process.execPath, ['scripts/build.mjs', '--release'], { stdio: 'inherit' });
} catch {
  console.error('package: the build failed (its message is above)');
  process.exit(1);
}
for (const needed of ['dist/extension.js', 'dist/trace-worker.js', 'dist/webview.js', 'schema/cachewright.schema.json']) {
  if (!existsSync(needed)) {
    console.error(`package: ${needed} is missing`);
    process.exit(1);
  }
}
// Relative links in README.md stay relative: the docs ship inside the package.
const args = ['package', '--no-dependencies', '--no-rewrite-relative-links', '--out', out];
if (!existsSync('LICENSE') && !existsSync('LICENSE.md')) args.push('--skip-license');
if (!manifest.repository) args.push('--allow-missing-repository');
try {
  execFileSync(process.execPath, ['node_modules/@vscode/vsce/vsce', ...args], { stdio: ['ignore', 'inherit', 'inherit'] });
} catch {
  console.error('package: vsce failed (its message is above)');
  process.exit(1);
}
// Every bundle the extension loads must be inside: a webview script left out fails only at run time.
const listed = new Set(execFileSync(process.execPath, ['node_modules/@vscode/vsce/vsce', 'ls', '--no-dependencies'], { stdio: ['ignore', 'pipe', 'inherit'] })
  .toString().split('\n').map((line) => line.trim()));
const bundles = readdirSync('dist').filter((f) => f.endsWith('.js') && f !== 'cli.js').map((f) => `dist/${f}`);
const left = bundles.filter((f) => !listed.has(f));
if (left.length > 0) {
  console.error(`package: .vscodeignore leaves out ${left.join(', ')}; add a line "!${left[0]}"`);
  process.exit(1);
}
const bytes = statSync(out).size;
console.log(`package: ${out} ${(bytes / 1024).toFixed(1)} KiB (${bytes} bytes)`);
