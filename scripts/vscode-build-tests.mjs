// Bundles the integration suite that runs inside the editor's extension host into out/test/index.js.
// vscode comes from the host and mocha from the project's node_modules (it loads reporters by name).
import * as esbuild from 'esbuild';

await esbuild.build({
  entryPoints: ['test/integration/suite/index.ts'],
  outfile: 'out/test/index.js',
  bundle: true,
  sourcemap: true,
  platform: 'node',
  format: 'cjs',
  target: 'es2022',
  logLevel: 'warning',
  external: ['vscode', 'mocha'],
});
