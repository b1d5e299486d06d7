// Bundles the three outputs: the extension host, the CLI and the webview.
// One engine, three front ends: each bundle carries its own copy of src/core.
import * as esbuild from 'esbuild';
import { existsSync, readdirSync, rmSync } from 'node:fs';
import { yamlEnvSwitches } from './yaml-env-switches.mjs';

const watch = process.argv.includes('--watch');
// --release: minified, no source maps (what the .vsix ships; see scripts/vscode-package.mjs).
const release = process.argv.includes('--release');
const common = { bundle: true, sourcemap: !release, minify: release, logLevel: 'warning', target: 'es2022', plugins: [yamlEnvSwitches] };
const targets = [
  { ...common, entryPoints: ['src/cli/main.ts'], outfile: 'dist/cli.js', platform: 'node', format: 'cjs',
    banner: { js: '#!/usr/bin/env node' } },
];
if (existsSync('src/extension/extension.ts')) {
  targets.push({ ...common, entryPoints: ['src/extension/extension.ts'], outfile: 'dist/extension.js',
    platform: 'node', format: 'cjs', external: ['vscode'] });
}
// The worker thread that measures I/O traces for the editor: its own file, loaded by path at run time.
if (existsSync('src/extension/trace-worker.ts')) {
  targets.push({ ...common, entryPoints: ['src/extension/trace-worker.ts'], outfile: 'dist/trace-worker.js',
    platform: 'node', format: 'cjs' });
}
if (existsSync('webview/main.ts')) {
  targets.push({ ...common, entryPoints: ['webview/main.ts'], outfile: 'dist/webview.js',
    platform: 'browser', format: 'iife' });
}
if (existsSync('webview/image-viewer/main.ts')) {
  targets.push({ ...common, entryPoints: ['webview/image-viewer/main.ts'], outfile: 'dist/image-viewer.js',
    platform: 'browser', format: 'iife' });
}
// Bundles a former build wrote under names no target uses any more would otherwise stay in dist/
// and be packaged (the .vsix check refuses them) or run by mistake.
const written = new Set(targets.flatMap((t) => [t.outfile, `${t.outfile}.map`]));
if (existsSync('dist')) {
  for (const name of readdirSync('dist')) {
    if (/\.js(\.map)?$/.test(name) && !written.has(`dist/${name}`)) rmSync(`dist/${name}`);
  }
}
if (watch) {
  for (const t of targets) await (await esbuild.context(t)).watch();
} else {
  await Promise.all(targets.map((t) => esbuild.build(t)));
}
