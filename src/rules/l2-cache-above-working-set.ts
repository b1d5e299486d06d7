import { maxOf, minimumL2Cache, minimumRefcountCache } from '../core/sizing';
import { formatPercent } from '../core/units';
import { size } from './format';
import { readableCacheSize } from './measured';
import { TRACE_CAUTION } from './trace-unreadable';
import { docsPage, type Rule } from './types';

/** How far above the traced working set a configured cache may go before memory is called unused. */
export const WORKING_SET_HEADROOM = 2n;

export const l2CacheAboveWorkingSet: Rule<'l2-cache-above-working-set'> = {
  id: 'l2-cache-above-working-set',
  severity: 'info',
  description: 'With a trace: the configured L2 cache is more than twice the working set the trace touched, memory the traced workload never used.',
  fixable: true,
  docs: docsPage('l2-cache-above-working-set'),
  checkDisk({ disk, top, trace, report, fix }) {
    const curve = trace?.facts.curve;
    if (!curve || top.l2Source === 'default') return;
    const workingSet = maxOf(curve.workingSet, minimumL2Cache(top.entrySize));
    if (top.l2 <= WORKING_SET_HEADROOM * workingSet) return;
    const sampled = curve.sampleRate < 1 ? ` (estimated from a ${formatPercent(curve.sampleRate, 2)} sample)` : '';
    const message =
      `the L2 cache of ${size(top.l2)} is ${Number((top.l2 * 10n) / workingSet) / 10}x the ${size(curve.workingSet)} of cache entries the trace touched${sampled}: ` +
      `${size(top.l2 - workingSet)} of it held nothing the traced workload used (it hits ${formatPercent(curve.hitRatioAt(workingSet))} with the working set alone). ${TRACE_CAUTION}`;
    const lowered = readableCacheSize(workingSet, top.entrySize);
    const { combinedCache, l2Cache, refcountCache } = disk.values;
    if (combinedCache && !l2Cache) {
      const total = lowered + (refcountCache?.value ?? minimumRefcountCache(top.geometry.clusterSize));
      report({ at: 'combinedCache', message, fix: fix.setSize('combinedCache', total, `Lower the combined cache to ${size(total)} (the traced working set plus the refcount cache)`) });
      return;
    }
    report({ at: 'l2Cache', message, fix: fix.setSize('l2Cache', lowered, `Lower the L2 cache to ${size(lowered)} (the traced working set)`) });
  },
};
