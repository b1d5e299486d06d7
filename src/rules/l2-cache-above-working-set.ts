import { maxOf, minimumL2Cache, minimumRefcountCache } from '../core/sizing';
import { factor, ratio, size } from './format';
import { readableCacheSize } from './measured';
import { TRACE_CAUTION } from './trace-unreadable';
import { declareRule } from './types';
import { say } from './wording';

/** How far above the traced working set a configured cache may go before memory is called unused. */
export const WORKING_SET_HEADROOM = 2n;

const WORDING = {
  aboveWorkingSet: 'the L2 cache of {cache} is {times}x the {workingSet} of cache entries the trace touched{sampled}: {unused} of it held nothing the traced workload used (it hits {hits} with the working set alone). {caution}',
  sampled: ' (estimated from a {rate} sample)',
  lowerCombined: 'Lower the combined cache to {combined} (the traced working set plus the refcount cache)',
  lowerL2: 'Lower the L2 cache to {cache} (the traced working set)',
} as const;

export const l2CacheAboveWorkingSet = declareRule({
  id: 'l2-cache-above-working-set',
  severity: 'info',
  description: 'With a trace: the configured L2 cache is more than twice the working set the trace touched, memory the traced workload never used.',
  fixable: true,
  wording: WORDING,
  checkDisk({ disk, top, trace, report, fix }) {
    const curve = trace?.facts.curve;
    if (!curve || top.l2Source === 'default') return;
    const workingSet = maxOf(curve.workingSet, minimumL2Cache(top.entrySize));
    if (top.l2 <= WORKING_SET_HEADROOM * workingSet) return;
    const fill = {
      cache: size(top.l2),
      times: factor(Number((top.l2 * 10n) / workingSet) / 10),
      workingSet: size(curve.workingSet),
      sampled: curve.sampleRate < 1 ? say(WORDING, 'sampled', { rate: ratio(curve.sampleRate, 2) }) : '',
      unused: size(top.l2 - workingSet),
      hits: ratio(curve.hitRatioAt(workingSet)),
      caution: TRACE_CAUTION,
    };
    const lowered = readableCacheSize(workingSet, top.entrySize);
    const { combinedCache, l2Cache, refcountCache } = disk.values;
    if (combinedCache && !l2Cache) {
      const total = lowered + (refcountCache?.value ?? minimumRefcountCache(top.geometry.clusterSize));
      report({ at: 'combinedCache', says: 'aboveWorkingSet', fill, fix: fix.setSize('combinedCache', total, say(WORDING, 'lowerCombined', { combined: size(total) })) });
      return;
    }
    report({ at: 'l2Cache', says: 'aboveWorkingSet', fill, fix: fix.setSize('l2Cache', lowered, say(WORDING, 'lowerL2', { cache: size(lowered) })) });
  },
});
