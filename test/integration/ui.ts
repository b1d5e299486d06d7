// The UI test: drives the workbench's DOM in chromium like a person would.
import * as path from 'node:path';
import { ROOT, workbenchUrl, type Browser, type CodeServer, type RunDirs } from './host';

export async function runUiTest(server: CodeServer, browser: Browser, dirs: RunDirs): Promise<number> {
  const { page } = browser;
  await page.goto(workbenchUrl(server, dirs, { extensionPath: ROOT }));
  await page.waitForSelector('.monaco-workbench', { timeout: 60_000 });
  const shot = path.join(dirs.base, 'workbench.png');
  await page.screenshot({ path: shot });
  console.log(`ui: workbench up; screenshot ${path.relative(ROOT, shot)}`);
  console.log('1 passed, 0 failed');
  return 0;
}
