// Shared test plumbing: temporary folders, the reference reader (Debian's python3-libqcow, run by the
// system interpreter /usr/bin/python3, not whatever python3 is on PATH) and expected guest bytes.
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { WrittenImage } from './qcow2-writer';

export const SYSTEM_PYTHON = '/usr/bin/python3';
export const LIBQCOW_PACKAGES = 'python3-libqcow';

export function tempFolder(prefix: string): { dir: string; file(name: string): string; remove(): void } {
  const dir = mkdtempSync(join(tmpdir(), `cachewright-${prefix}-`));
  return { dir, file: (name) => join(dir, name), remove: () => rmSync(dir, { recursive: true, force: true }) };
}

let libqcowState: { ok: true } | { ok: false; reason: string } | undefined;

export function libqcowAvailable(): { ok: true } | { ok: false; reason: string } {
  if (!libqcowState) {
    const probe = spawnSync(SYSTEM_PYTHON, ['-c', 'import pyqcow; print(pyqcow.get_version())'], { encoding: 'utf8' });
    libqcowState = probe.status === 0
      ? { ok: true }
      : { ok: false, reason: `the reference reader is missing: install Debian's ${LIBQCOW_PACKAGES} (apt-get install -y ${LIBQCOW_PACKAGES}) so that ${SYSTEM_PYTHON} can import pyqcow (${(probe.stderr || probe.error?.message || '').trim().split('\n').pop()})` };
  }
  return libqcowState;
}

/** In CI a missing reference reader fails the suite; elsewhere its tests are skipped with the reason. */
export function requireLibqcow(context: Mocha.Context): void {
  const state = libqcowAvailable();
  if (state.ok) return;
  if (process.env.CI === 'true') throw new Error(state.reason);
  console.warn(`      skipped: ${state.reason}`);
  context.skip();
}

export interface LibqcowRead {
  mediaSize?: number;
  reads?: string[];
  error?: string;
}

export function libqcowRead(images: Array<{ chain: string[]; reads: Array<[number, number]> }>): LibqcowRead[] {
  const out = execFileSync(SYSTEM_PYTHON, [join(__dirname, 'libqcow-read.py')], { input: JSON.stringify({ images }), maxBuffer: 256 * 1024 * 1024 });
  return (JSON.parse(out.toString('utf8')) as { results: LibqcowRead[] }).results;
}

/** What a guest reads through a chain of written layers [SPEC: unallocated falls through, else zeros]. */
export function expectedHex(chain: Array<{ image: WrittenImage; virtualSize: bigint }>, offset: number, length: number): string {
  const bytes = new Uint8Array(length);
  for (let i = 0; i < length; i++) {
    let value = 0;
    for (const layer of chain) {
      if (BigInt(offset + i) >= layer.virtualSize) break;
      const b = layer.image.layerBytes(offset + i);
      if (b !== undefined) {
        value = b;
        break;
      }
    }
    bytes[i] = value;
  }
  return Buffer.from(bytes).toString('hex');
}
