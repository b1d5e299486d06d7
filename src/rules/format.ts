// Rule messages write numbers through the one formatting module, like every other front end.
import { formatCount, formatInterval, formatPercent, formatShare, formatSize } from '../core/format';

export const size = formatSize;
export const share = formatPercent;
export const ratio = formatShare;
export const interval = formatInterval;
export const count = formatCount;
/** A value as the definition writes it (a YAML or JSON scalar): `64M`, `65536`, `true`. */
export const asWritten = (raw: unknown): string => String(raw);
/** A ratio as a plain decimal, the way "16x" or "2.5x" reads: "16", "2.5". */
export const factor = (times: number): string => String(times);
/** A byte count in full, as a definition's value reads back (no separators): "1048577". */
export const exactBytes = (bytes: bigint): string => bytes.toString();
