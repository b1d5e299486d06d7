// Runs the same integration suite in the desktop editor through @vscode/test-electron.
// It downloads an editor build, so it needs internet: for a developer's desktop, not for CI
// (CI runs the suite in code-server; see run.ts). Usage: npm run test:desktop
import * as path from 'node:path';
import { cpSync, existsSync, mkdtempSync } from 'node:fs';
import * as os from 'node:os';
import { runTests } from '@vscode/test-electron';
import { ensureDemoTraces } from './host';

async function main(): Promise<void> {
  const root = path.resolve(__dirname, '..', '..');
  const workspace = mkdtempSync(path.join(os.tmpdir(), 'cachewright-desktop-'));
  const demo = path.join(root, 'examples');
  ensureDemoTraces();
  if (existsSync(demo)) cpSync(demo, workspace, { recursive: true });
  await runTests({
    version: '1.100.3',
    extensionDevelopmentPath: root,
    extensionTestsPath: path.join(root, 'out', 'test', 'index.js'),
    launchArgs: [workspace, '--disable-extensions', '--disable-workspace-trust'],
  });
}

main().catch((err: unknown) => {
  console.error(`desktop suite failed: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
});
