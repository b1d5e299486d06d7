// Sizes and intervals as docs/mapping-file.md defines them. Byte counts are bigint so that no value a
// qcow2 header can hold is ever rounded; decimal fractions ("2.5M") are computed exactly.
import { fail, ok, type Outcome } from './results';
import { atIndex } from './indexed';

const KI = 1024n;
/** Binary multipliers [IEC 80000-13]: K, Ki and KiB all mean 2^10, and so on up to P. */
const BINARY: Record<string, bigint> = {};
const DECIMAL: Record<string, bigint> = { kB: 1000n, MB: 1000n ** 2n, GB: 1000n ** 3n, TB: 1000n ** 4n, PB: 1000n ** 5n, EB: 1000n ** 6n };
const BINARY_LETTERS = ['K', 'M', 'G', 'T', 'P', 'E'] as const;
BINARY_LETTERS.forEach((letter, i) => {
  const factor = KI ** BigInt(i + 1);
  BINARY[letter] = factor;
  BINARY[`${letter}i`] = factor;
  BINARY[`${letter}iB`] = factor;
});

export const SIZE_UNITS_HELP = 'a whole number of bytes, or a number with K, M, G, T, P (or Ki.., KiB..: powers of 1024) or kB, MB, GB, TB (powers of 1000)';
export const INTERVAL_HELP = 'a whole number of seconds, or a number with s, m or h';

function multiplierOf(unit: string): Outcome<bigint> {
  if (unit === '' || unit === 'B') return ok(1n);
  const binary = BINARY[unit];
  if (binary !== undefined) return ok(binary);
  const decimal = DECIMAL[unit];
  if (decimal !== undefined) return ok(decimal);
  if (unit === 'KB') return fail('unit "KB" is ambiguous: write KiB (1024 bytes) or kB (1000 bytes)');
  const upper = unit.charAt(0).toUpperCase() + unit.slice(1);
  if (BINARY[upper] !== undefined) return fail(`unknown unit "${unit}" (did you mean ${upper}?)`);
  return fail(`unknown unit "${unit}"`);
}

const NUMBER_WITH_UNIT = /^([+-]?)(\d+)(?:\.(\d+))?\s*([A-Za-z]*)$/;

/** Reads a size: a JSON/YAML number of bytes or a string such as "64K", "2.5 MiB", "1 GB". */
export function parseSize(input: unknown): Outcome<bigint> {
  if (typeof input === 'bigint') return input < 0n ? fail(`${input} is negative; sizes must be ${SIZE_UNITS_HELP}`) : ok(input);
  if (typeof input === 'number') {
    if (!Number.isFinite(input)) return fail(`${input} is not a size; expected ${SIZE_UNITS_HELP}`);
    if (input < 0) return fail(`${input} is negative; a size cannot be below 0`);
    if (!Number.isInteger(input)) return fail(`${input} is not a whole number of bytes`);
    if (!Number.isSafeInteger(input)) return fail(`${input} is too large to be read exactly as a number; write it as a string with a unit, e.g. "4P"`);
    return ok(BigInt(input));
  }
  if (typeof input !== 'string') return fail(`expected a size (${SIZE_UNITS_HELP}), got ${describe(input)}`);
  const text = input.trim();
  const match = NUMBER_WITH_UNIT.exec(text);
  if (!match) return fail(`"${input}" is not a size; expected ${SIZE_UNITS_HELP}`);
  const [, sign = '', whole = '0', fraction = '', unit = ''] = match;
  if (sign === '-') return fail(`"${input}" is negative; a size cannot be below 0`);
  const multiplier = multiplierOf(unit);
  if (!multiplier.ok) return fail(`"${input}": ${multiplier.error}; expected ${SIZE_UNITS_HELP}`);
  const scale = 10n ** BigInt(fraction.length);
  const numerator = BigInt(whole + fraction) * multiplier.value;
  if (numerator % scale !== 0n) return fail(`"${input}" is not a whole number of bytes`);
  return ok(numerator / scale);
}

/** Reads an interval in seconds: a number, or a string "90", "90s", "10m", "1h". */
export function parseInterval(input: unknown): Outcome<number> {
  if (typeof input === 'number') {
    if (!Number.isFinite(input) || input < 0) return fail(`${input} is not an interval; expected ${INTERVAL_HELP} (0 turns cleanup off)`);
    if (!Number.isSafeInteger(input)) return fail(`${input} is not a whole number of seconds`);
    return ok(input);
  }
  if (typeof input !== 'string') return fail(`expected an interval (${INTERVAL_HELP}), got ${describe(input)}`);
  const match = /^(\d+)(?:\.(\d+))?\s*(s|m|h)?$/.exec(input.trim());
  if (!match) return fail(`"${input}" is not an interval; expected ${INTERVAL_HELP}`);
  const [, whole = '0', fraction = '', unit = 's'] = match;
  const factor = unit === 'h' ? 3600n : unit === 'm' ? 60n : 1n;
  const scale = 10n ** BigInt(fraction.length);
  const numerator = BigInt(whole + fraction) * factor;
  if (numerator % scale !== 0n) return fail(`"${input}" is not a whole number of seconds`);
  const seconds = numerator / scale;
  if (seconds > BigInt(Number.MAX_SAFE_INTEGER)) return fail(`"${input}" is too long an interval`);
  return ok(Number(seconds));
}

function describe(value: unknown): string {
  if (value === null) return 'null';
  if (Array.isArray(value)) return 'a list';
  if (typeof value === 'object') return 'a map';
  if (typeof value === 'boolean') return `the boolean ${value}`;
  return typeof value;
}

/** Shortest exact form that parseSize reads back to the same bytes: "64K", "2560K", "512". */
export function formatSizeExact(bytes: bigint, style: SizeStyle = DEFAULT_STYLE): string {
  if (style.kind === 'bytes' || bytes === 0n) return bytes.toString();
  for (let i = BINARY_LETTERS.length; i >= 1; i--) {
    const factor = KI ** BigInt(i);
    if (bytes % factor === 0n) {
      const letter = atIndex(BINARY_LETTERS, i - 1);
      const suffix = style.kind === 'letter' ? letter : style.kind === 'iec' ? `${letter}i` : `${letter}iB`;
      return `${bytes / factor}${style.space ? ' ' : ''}${suffix}`;
    }
  }
  return bytes.toString();
}

/** How a file writes its sizes, so a fix writes new values the same way. */
export interface SizeStyle {
  kind: 'bytes' | 'letter' | 'iec' | 'iecB';
  space: boolean;
}
const DEFAULT_STYLE: SizeStyle = { kind: 'letter', space: false };

/** Infers the style of one written size: `65536` -> bytes, `64K` -> letter, `64 KiB` -> iecB with a space. */
export function sizeStyleOf(written: unknown): SizeStyle | undefined {
  if (typeof written === 'number') return { kind: 'bytes', space: false };
  if (typeof written !== 'string') return undefined;
  const match = NUMBER_WITH_UNIT.exec(written.trim());
  if (!match) return undefined;
  const unit = match[4] ?? '';
  const space = /\d\s+[A-Za-z]/.test(written);
  if (unit === '' || unit === 'B') return { kind: 'bytes', space: false };
  if (/^[KMGTPE]$/.test(unit)) return { kind: 'letter', space };
  if (/^[KMGTPE]i$/.test(unit)) return { kind: 'iec', space };
  if (/^[KMGTPE]iB$/.test(unit)) return { kind: 'iecB', space };
  return undefined; // decimal units: a binary value rarely fits them exactly, so fall back to the default
}


export const SHARE_HELP = 'a number from 0 to 1, or a percentage such as "99%"';

/** Reads a share: `0.99`, `"0.99"` or `"99%"` (docs/mapping-file.md), from 0 to 1 inclusive. */
export function parseShare(input: unknown): Outcome<number> {
  let value: number;
  if (typeof input === 'number') value = input;
  else if (typeof input === 'string') {
    const match = /^(\d+(?:\.\d+)?|\.\d+)\s*(%?)$/.exec(input.trim());
    if (!match) return fail(`"${input}" is not a share; expected ${SHARE_HELP}`);
    value = Number(match[1]) / (match[2] === '%' ? 100 : 1);
  } else return fail(`expected a share (${SHARE_HELP}), got ${describe(input)}`);
  if (!Number.isFinite(value) || value < 0 || value > 1) return fail(`${typeof input === 'string' ? `"${input}"` : input} is out of range; expected ${SHARE_HELP}`);
  return ok(value);
}

