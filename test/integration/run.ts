// Runs the extension's tests in a real VS Code: code-server on loopback, driven by chromium.
//   tsx test/integration/run.ts          the mocha suite inside the extension host
//   tsx test/integration/run.ts --ui     the UI test against the workbench's DOM
//   tsx test/integration/run.ts --installed   the packaged .vsix, installed, through the UI
// Prints mocha's report and exits with the runner's code. With no host installed it says what is
// missing and how to install it, and skips (exit 0) unless CI=true, where that is a failure.
import * as path from 'node:path';
import { createWriteStream, existsSync, readFileSync, statSync } from 'node:fs';
import { format } from 'node:util';
import {
  ROOT, installVsix, launchBrowser, makeRunDirs, missingHost, reportMissingHost, seedWorkspace, startCodeServer,
  workbenchUrl, type Browser, type CodeServer,
} from './host';
import { SUITE_START_MARK } from './suite/marks';
import { runInstalledTest, runUiTest } from './ui';

const OVERALL_TIMEOUT_MS = 6 * 60_000;
const SUITE_BUNDLE = path.join(ROOT, 'out', 'test', 'index.js');
const EXTENSION_BUNDLE = path.join(ROOT, 'dist', 'extension.js');

async function main(): Promise<number> {
  const ui = process.argv.includes('--ui');
  // --installed: the packaged .vsix installed into code-server as a user would, then checked
  // through the UI: what ships is complete and runs.
  const installed = process.argv.includes('--installed');
  const what = ui ? 'vscode ui test' : installed ? 'vscode installed-package test' : 'vscode integration suite';
  const missing = missingHost();
  if (missing.length > 0) return reportMissingHost(missing, what);
  for (const bundle of ui ? [EXTENSION_BUNDLE] : installed ? [] : [EXTENSION_BUNDLE, SUITE_BUNDLE]) {
    if (!existsSync(bundle)) {
      console.error(`${what}: ${path.relative(ROOT, bundle)} is missing; run npm run build and node scripts/vscode-build-tests.mjs first`);
      return 2;
    }
  }

  const dirs = makeRunDirs(ui ? 'vscode-ui' : installed ? 'vscode-installed' : 'vscode-suite');
  seedWorkspace(dirs);
  let server: CodeServer | undefined;
  let browser: Browser | undefined;
  let timer: NodeJS.Timeout | undefined;
  const cleanup = async (): Promise<void> => {
    if (timer) clearTimeout(timer);
    await browser?.close().catch(() => undefined);
    await server?.stop();
  };
  const timeout = new Promise<number>((resolve) => {
    timer = setTimeout(() => {
      console.error(`${what}: gave up after ${OVERALL_TIMEOUT_MS / 1000} s (logs in ${path.relative(ROOT, dirs.base)})`);
      resolve(1);
    }, OVERALL_TIMEOUT_MS);
  });

  try {
    if (installed) {
      const vsix = packagePath();
      if (!existsSync(vsix)) throw new Error(`${path.basename(vsix)} is missing; run npm run package first`);
      await installVsix(dirs, vsix);
    }
    server = await startCodeServer(dirs);
    browser = await launchBrowser(dirs);
    const started = browser;
    const work = ui || installed
      ? (installed ? runInstalledTest(server, browser, dirs) : runUiTest(server, browser, dirs)).catch(async (err: unknown) => {
        const shot = path.join(dirs.base, 'failure.png');
        await started.page.screenshot({ path: shot }).catch(() => undefined);
        console.error(`${what}: ${err instanceof Error ? err.message : String(err)} (screenshot ${path.relative(ROOT, shot)})`);
        return 1;
      })
      : runSuite(server, browser, dirs);
    const code = await Promise.race([work, timeout]);
    if (!ui && !installed) printPackageSize();
    if (browser.blocked.length > 0) {
      console.log(`${what}: refused ${browser.blocked.length} request(s) not addressed to 127.0.0.1:`);
      for (const url of [...new Set(browser.blocked)].slice(0, 10)) console.log(`  ${url}`);
    }
    return code;
  } catch (err) {
    console.error(`${what}: ${err instanceof Error ? err.message : String(err)}`);
    return 1;
  } finally {
    await cleanup();
  }
}

/** Opens the workbench with the suite in the payload and relays its report until the runner exits. */
async function runSuite(server: CodeServer, browser: Browser, dirs: ReturnType<typeof makeRunDirs>): Promise<number> {
  const { page } = browser;
  const automationLog = createWriteStream(path.join(dirs.base, 'automation.log'));
  let suiteStarted = false;
  const counts = { passed: 0, failed: 0 };
  let settle: (code: number) => void = () => undefined;
  const exited = new Promise<number>((resolve) => { settle = resolve; });
  await page.exposeFunction('codeAutomationLog', (type: unknown, args: unknown) => {
    const parts: unknown[] = Array.isArray(args) ? args : [args];
    // The host forwards console calls as (format, ...values), as mocha's reporter wrote them.
    const text = format(...parts);
    automationLog.write(`[${String(type)}] ${text}\n`);
    // Before the suite starts, the page relays the workbench's own chatter: keep that in the log.
    if (text.includes(SUITE_START_MARK)) { suiteStarted = true; return; }
    if (!suiteStarted) return;
    console.log(text);
    const passing = /^\s*(\d+) passing/.exec(text);
    const failing = /^\s*(\d+) failing/.exec(text);
    if (passing) counts.passed = Number(passing[1]);
    if (failing) counts.failed = Number(failing[1]);
  });
  await page.exposeFunction('codeAutomationExit', (code: unknown) => {
    settle(typeof code === 'number' ? code : 1);
  });
  await page.goto(workbenchUrl(server, dirs, { extensionPath: ROOT, testsPath: SUITE_BUNDLE }));
  const code = await exited;
  console.log(`suite: ${counts.passed} passed, ${counts.failed} failed`);
  return code;
}

/** The packaged extension's size, for the performance summary (built by npm run package). */
function packagePath(): string {
  const manifest = JSON.parse(readFileSync(path.join(ROOT, 'package.json'), 'utf8')) as { name: string; version: string };
  return path.join(ROOT, `${manifest.name}-${manifest.version}.vsix`);
}

function printPackageSize(): void {
  const vsix = packagePath();
  if (existsSync(vsix)) {
    const bytes = statSync(vsix).size;
    console.log(`perf: .vsix size: ${(bytes / 1024).toFixed(1)} KiB (${bytes} bytes, ${path.basename(vsix)})`);
  } else {
    console.log('perf: .vsix size: not built (npm run package)');
  }
}

main().then(
  (code) => process.exit(code),
  (err: unknown) => {
    console.error(err instanceof Error ? err.message : String(err));
    process.exit(1);
  },
);
