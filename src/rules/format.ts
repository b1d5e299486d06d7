// Rule messages write numbers through the one formatting module, like every other front end.
import { formatInterval, formatPercent, formatShare, formatSize } from '../core/format';

export const size = formatSize;
export const share = formatPercent;
export const ratio = formatShare;
export const interval = formatInterval;
