// Starts a real VS Code workbench (code-server, loopback only) and a headless chromium pointed at it.
// Everything the run writes lives in one fresh folder under .test-output/, and nothing it does may
// reach beyond 127.0.0.1: the server gets no marketplace and quiet settings, the browser a route
// that aborts every other request.
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync, cpSync, createWriteStream } from 'node:fs';
import { createServer } from 'node:net';
import * as os from 'node:os';
import * as path from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';

export const ROOT = path.resolve(__dirname, '..', '..');
export const CODE_SERVER_BIN = path.join(ROOT, '.cache', 'code-server', 'node_modules', '.bin', 'code-server');
export const CHROMIUM_BIN = '/usr/bin/chromium';
export const SETUP_COMMAND = 'bash test/integration/setup-code-server.sh';

/** What is missing for a real-editor run, in words a person can act on. */
export function missingHost(): string[] {
  const missing: string[] = [];
  if (!existsSync(CODE_SERVER_BIN)) missing.push(`code-server 4.100.3 (expected at ${path.relative(ROOT, CODE_SERVER_BIN)})`);
  if (!existsSync(CHROMIUM_BIN)) missing.push(`Debian's chromium (expected at ${CHROMIUM_BIN})`);
  return missing;
}

/**
 * Reports a missing host and returns the exit code: a skip (0) on a developer's machine, a failure
 * (1) under CI=true, where the suites must really run.
 */
export function reportMissingHost(missing: string[], what: string): number {
  const ci = process.env.CI === 'true';
  console.log(`${what}: ${ci ? 'FAILED' : 'skipped'}: not installed: ${missing.join('; ')}`);
  console.log(`${what}: install them with: ${SETUP_COMMAND}`);
  return ci ? 1 : 0;
}

export interface RunDirs {
  base: string;
  userData: string;
  extensions: string;
  workspace: string;
  browserProfile: string;
  tmp: string;
  xdgConfig: string;
  xdgData: string;
  xdgCache: string;
}

export function makeRunDirs(label: string): RunDirs {
  const stamp = new Date().toISOString().replace(/[:.]/g, '-');
  const base = path.join(ROOT, '.test-output', `${label}-${stamp}-${process.pid}`);
  const dirs: RunDirs = {
    base,
    userData: path.join(base, 'user-data'),
    extensions: path.join(base, 'extensions'),
    workspace: path.join(base, 'workspace'),
    browserProfile: path.join(base, 'browser-profile'),
    // The host makes unix sockets in TMPDIR, whose paths must stay under 108 bytes: a short folder
    // of its own under the system's temporary directory, removed with the run.
    tmp: mkdtempSync(path.join(os.tmpdir(), 'dw-')),
    xdgConfig: path.join(base, 'xdg', 'config'),
    xdgData: path.join(base, 'xdg', 'data'),
    xdgCache: path.join(base, 'xdg', 'cache'),
  };
  for (const dir of Object.values(dirs)) mkdirSync(dir, { recursive: true });
  return dirs;
}

/** Copies the demo fleet into the run's workspace, so tests may edit it freely. */
export function seedWorkspace(dirs: RunDirs): void {
  const demo = path.join(ROOT, 'examples');
  if (existsSync(demo)) cpSync(demo, dirs.workspace, { recursive: true });
}

// Settings without which the extension host still reaches for the internet.
const QUIET_SETTINGS = {
  'telemetry.telemetryLevel': 'off',
  'update.mode': 'none',
  'extensions.autoUpdate': false,
  'extensions.autoCheckUpdates': false,
  'extensions.ignoreRecommendations': true,
  'workbench.enableExperiments': false,
  'workbench.startupEditor': 'none',
  'workbench.tips.enabled': false,
  'workbench.welcomePage.walkthroughs.openOnInstall': false,
  'git.enabled': false,
  'npm.fetchOnlinePackageInfo': false,
  'json.schemaDownload.enable': false,
  'typescript.disableAutomaticTypeAcquisition': true,
  'security.workspace.trust.enabled': false,
  'chat.disableAIFeatures': true,
};

/** Installs a packaged extension into the run's extensions folder, as a user would. */
export async function installVsix(dirs: RunDirs, vsix: string): Promise<void> {
  await new Promise<void>((resolve, reject) => {
    const child = spawn(CODE_SERVER_BIN, ['--user-data-dir', dirs.userData, '--extensions-dir', dirs.extensions, '--install-extension', vsix], {
      stdio: ['ignore', 'pipe', 'pipe'],
      env: { ...process.env, EXTENSIONS_GALLERY: '{}', XDG_CONFIG_HOME: dirs.xdgConfig, XDG_DATA_HOME: dirs.xdgData, XDG_CACHE_HOME: dirs.xdgCache, TMPDIR: dirs.tmp },
    });
    let output = '';
    child.stdout?.on('data', (chunk: Buffer) => { output += chunk.toString(); });
    child.stderr?.on('data', (chunk: Buffer) => { output += chunk.toString(); });
    child.once('error', reject);
    child.once('exit', (code) => (code === 0 ? resolve() : reject(new Error(`installing ${path.basename(vsix)} failed (${code}): ${output.trim()}`))));
  });
}

export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = createServer();
    server.once('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const address = server.address();
      const port = typeof address === 'object' && address ? address.port : 0;
      server.close(() => resolve(port));
    });
  });
}

export interface CodeServer {
  port: number;
  origin: string;
  stop(): Promise<void>;
}

export interface ServerOptions {
  settings?: Record<string, unknown>;
}

export async function startCodeServer(dirs: RunDirs, options: ServerOptions = {}): Promise<CodeServer> {
  const port = await freePort();
  const config = path.join(dirs.base, 'code-server.yaml');
  writeFileSync(config, [
    `bind-addr: 127.0.0.1:${port}`,
    'auth: none',
    'cert: false',
    'disable-telemetry: true',
    'disable-update-check: true',
    'disable-workspace-trust: true',
    'disable-getting-started-override: true',
    'disable-proxy: true',
    '',
  ].join('\n'));
  const userSettingsDir = path.join(dirs.userData, 'User');
  mkdirSync(userSettingsDir, { recursive: true });
  writeFileSync(path.join(userSettingsDir, 'settings.json'),
    JSON.stringify({ ...QUIET_SETTINGS, ...options.settings }, null, 2));

  const log = createWriteStream(path.join(dirs.base, 'code-server.log'));
  // detached: the server leads its own process group (setsid), so the extension host, which
  // outlives the browser, is stopped with it.
  const child: ChildProcess = spawn(CODE_SERVER_BIN, [
    '--config', config,
    '--user-data-dir', dirs.userData,
    '--extensions-dir', dirs.extensions,
    '--ignore-last-opened',
  ], {
    detached: true,
    stdio: ['ignore', 'pipe', 'pipe'],
    env: {
      ...process.env,
      EXTENSIONS_GALLERY: '{}',
      XDG_CONFIG_HOME: dirs.xdgConfig,
      XDG_DATA_HOME: dirs.xdgData,
      XDG_CACHE_HOME: dirs.xdgCache,
      TMPDIR: dirs.tmp,
    },
  });
  child.stdout?.pipe(log);
  child.stderr?.pipe(log);
  let exited = false;
  child.once('exit', () => { exited = true; });

  const stop = async (): Promise<void> => {
    if (child.pid === undefined || exited) { rmSync(dirs.tmp, { recursive: true, force: true }); return; }
    const group = -child.pid;
    try { process.kill(group, 'SIGTERM'); } catch { return; }
    for (let i = 0; i < 50 && !exited; i++) await sleep(100);
    if (!exited) { try { process.kill(group, 'SIGKILL'); } catch { /* already gone */ } }
    // Children of the group may outlive its leader: make sure the whole group is gone.
    try { process.kill(group, 'SIGKILL'); } catch { /* already gone */ }
    rmSync(dirs.tmp, { recursive: true, force: true });
  };

  const origin = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + 60_000;
  for (;;) {
    if (exited) throw new Error(`code-server exited during start-up; see ${path.join(dirs.base, 'code-server.log')}`);
    try {
      const res = await fetch(`${origin}/healthz`);
      if (res.ok) break;
    } catch { /* not listening yet */ }
    if (Date.now() > deadline) { await stop(); throw new Error('code-server did not become healthy within 60 s'); }
    await sleep(200);
  }
  return { port, origin, stop };
}

export interface WorkbenchOptions {
  /** Absolute path of the extension under development; absent: the installed extensions only. */
  extensionPath?: string;
  /** Absolute path of the bundled suite; when set, the host runs it and reports through the page. */
  testsPath?: string;
}

export function workbenchUrl(server: CodeServer, dirs: RunDirs, opts: WorkbenchOptions): string {
  const remote = (abs: string): string => `vscode-remote://127.0.0.1:${server.port}${abs}`;
  const payload: Array<[string, string]> = [];
  if (opts.extensionPath) payload.push(['extensionDevelopmentPath', remote(opts.extensionPath)]);
  if (opts.testsPath) payload.push(['extensionTestsPath', remote(opts.testsPath)]);
  const folder = `${server.origin}/?folder=${encodeURIComponent(dirs.workspace)}`;
  return payload.length > 0 ? `${folder}&payload=${encodeURIComponent(JSON.stringify(payload))}` : folder;
}

export interface Browser {
  context: BrowserContext;
  page: Page;
  /** Requests the route refused: anything not addressed to 127.0.0.1. */
  blocked: string[];
  close(): Promise<void>;
}

export async function launchBrowser(dirs: RunDirs): Promise<Browser> {
  const context = await chromium.launchPersistentContext(dirs.browserProfile, {
    executablePath: CHROMIUM_BIN,
    headless: true,
    viewport: { width: 1600, height: 1000 },
    args: [
      '--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
      '--disable-background-networking', '--disable-component-update', '--disable-sync',
    ],
  });
  const blocked: string[] = [];
  await context.route('**/*', async (route) => {
    const url = new URL(route.request().url());
    const local = url.hostname === '127.0.0.1' || url.protocol === 'data:' || url.protocol === 'blob:';
    if (local) await route.continue();
    else { blocked.push(url.href); await route.abort(); }
  });
  const page = context.pages()[0] ?? await context.newPage();
  return { context, page, blocked, close: () => context.close() };
}

export function sleep(ms: number): Promise<void> {
  return new Promise((resolve) => setTimeout(resolve, ms));
}
