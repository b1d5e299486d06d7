import { asWritten } from './format';
import { declareRule, relatedAt } from './types';
import { say } from './wording';

const WORDING = {
  allThree: 'L2 ({l2}), refcount ({refcount}) and combined ({combined}) cache sizes are all set; the driver refuses a disk with all three. Remove one of them.',
  l2Here: 'L2 cache set here',
  refcountHere: 'refcount cache set here',
} as const;

export const cacheOptionsConflict = declareRule({
  id: 'cache-options-conflict',
  severity: 'error',
  description: 'L2, refcount and combined cache sizes are all set; the driver accepts at most two.',
  fixable: false,
  wording: WORDING,
  checkDisk({ disk, report }) {
    const { l2Cache, refcountCache, combinedCache } = disk.values;
    if (!l2Cache || !refcountCache || !combinedCache) return;
    report({
      at: 'combinedCache',
      says: 'allThree',
      fill: { l2: asWritten(l2Cache.raw), refcount: asWritten(refcountCache.raw), combined: asWritten(combinedCache.raw) },
      related: [
        relatedAt(say(WORDING, 'l2Here'), l2Cache),
        relatedAt(say(WORDING, 'refcountHere'), refcountCache),
      ],
    });
  },
});
