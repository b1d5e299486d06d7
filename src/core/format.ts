// The one way every front end (CLI text, rule messages, the sizing panel, the image viewer) writes
// numbers for people: sizes in binary units (IEC 80000-13), shares as percent, counts with thousands
// separators, intervals in seconds with the unit a person would pick. Pure: runs in the webviews too.
// Values written back into definition files are not formatted here (see units.ts, formatSizeExact).

import { atIndex } from './indexed';

const KI = 1024n;
const BINARY_NAMES = ['B', 'KiB', 'MiB', 'GiB', 'TiB', 'PiB', 'EiB'] as const;
/** 1024 to the power of each unit's index, computed once: the lint formats several sizes per disk. */
const BINARY_UNITS = BINARY_NAMES.map((_, index) => KI ** BigInt(index));

/**
 * A size: the largest binary unit that leaves a value of at least 1, with up to two decimals
 * ("2.5 MiB", "192 KiB"). Prefixed with "~" when those decimals are not exact.
 */
export function formatSize(bytes: bigint): string {
  let index = 0;
  while (index < BINARY_NAMES.length - 1 && bytes >= atIndex(BINARY_UNITS, index + 1)) index++;
  const unit = atIndex(BINARY_UNITS, index);
  const hundredths = (bytes * 100n) / unit;
  const exact = (bytes * 100n) % unit === 0n;
  const whole = hundredths / 100n;
  const cents = hundredths % 100n;
  const decimals = cents === 0n ? '' : `.${cents.toString().padStart(2, '0').replace(/0$/, '')}`;
  return `${exact ? '' : '~'}${whole}${decimals} ${BINARY_NAMES[index]}`;
}

/**
 * A share as percent with one decimal (or `decimals`), rounded down so that anything short of the
 * whole never reads 100 %; trailing zeros are dropped ("6.2 %", "25 %", "100 %"). A share above 0
 * that rounds to 0 reads "under 0.1 %".
 */
export function formatShare(share: number, decimals = 1): string {
  if (!Number.isFinite(share) || share <= 0) return '0 %';
  const scale = 10 ** decimals;
  const units = Math.floor(share * 100 * scale + 1e-9);
  if (share < 1 && units >= 100 * scale) return `${trimDecimals(100 * scale - 1, decimals)} %`;
  if (units === 0) return `under ${1 / scale} %`;
  return `${trimDecimals(units, decimals)} %`;
}

function trimDecimals(units: number, decimals: number): string {
  const scale = 10 ** decimals;
  const whole = Math.floor(units / scale);
  const rest = (units % scale).toString().padStart(decimals, '0').replace(/0+$/, '');
  return rest === '' ? groupThousands(whole) : `${groupThousands(whole)}.${rest}`;
}

/**
 * An integer with a comma between groups of three digits, as toLocaleString('en-US') writes it:
 * that call goes through the Intl machinery, which cost more than the rest of a rule's message.
 */
function groupThousands(n: number): string {
  if (!Number.isSafeInteger(n) || Object.is(n, -0)) return n.toLocaleString('en-US');
  const digits = String(Math.abs(n));
  let out = digits.length > 3 ? digits.slice(0, ((digits.length - 1) % 3) + 1) : digits;
  for (let i = out.length; i < digits.length; i += 3) out += `,${digits.slice(i, i + 3)}`;
  return n < 0 ? `-${out}` : out;
}

/** part / whole as formatShare writes it, exactly for byte counts of any size. */
export function formatPercent(part: bigint, whole: bigint): string {
  if (whole <= 0n || part === whole) return '100 %';
  if (part <= 0n) return '0 %';
  const tenths = Number((part * 1000n) / whole);
  if (part > whole) return `${trimDecimals(tenths, 1)} %`;
  if (tenths === 0) return 'under 0.1 %';
  return `${trimDecimals(Math.min(tenths, 999), 1)} %`;
}

/** A count with thousands separators: "12,345". */
export function formatCount(n: number | bigint): string {
  return typeof n === 'number' ? groupThousands(n) : n.toLocaleString('en-US');
}

/** "1 table", "2 tables", "1,024 entries". */
export function formatCounted(n: number | bigint, one: string, many = `${one}s`): string {
  return `${formatCount(n)} ${n === 1 || n === 1n ? one : many}`;
}

/** An interval in the notation the mapping file reads back: "10m", "90s", "1h"; 0 is "0 (off)". */
export function formatInterval(seconds: number): string {
  if (seconds === 0) return '0 (off)';
  if (seconds % 3600 === 0) return `${seconds / 3600}h`;
  if (seconds % 60 === 0) return `${seconds / 60}m`;
  return `${seconds}s`;
}
