// What the benchmark scripts share: where the built CLI is, and their numeric command-line options.
import * as path from 'node:path';

export const ROOT = path.resolve(__dirname, '..', '..', '..');
export const CLI = path.join(ROOT, 'dist', 'cli.js');

/** `--NAME N` from the command line: a positive number, else the fallback. */
export function option(name: string, fallback: number): number {
  const at = process.argv.indexOf(`--${name}`);
  const value = at === -1 ? undefined : Number(process.argv[at + 1]);
  return value !== undefined && Number.isFinite(value) && value > 0 ? value : fallback;
}
