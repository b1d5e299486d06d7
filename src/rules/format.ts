// Shared wording for rule messages: sizes in binary units, shares of a disk with one decimal.
import { formatSize } from '../core/units';

export const size = formatSize;

export function share(part: bigint, whole: bigint): string {
  if (whole <= 0n || part >= whole) return '100%';
  const tenths = (part * 1000n) / whole;
  return `${tenths / 10n}.${tenths % 10n}%`;
}
