import { docsPage, type Rule } from './types';

export const cacheOptionsConflict: Rule<'cache-options-conflict'> = {
  id: 'cache-options-conflict',
  severity: 'error',
  description: 'L2, refcount and combined cache sizes are all set; the driver accepts at most two.',
  fixable: false,
  docs: docsPage('cache-options-conflict'),
  checkDisk({ disk, report }) {
    const { l2Cache, refcountCache, combinedCache } = disk.values;
    if (!l2Cache || !refcountCache || !combinedCache) return;
    report({
      at: 'combinedCache',
      message: `L2 (${l2Cache.raw}), refcount (${refcountCache.raw}) and combined (${combinedCache.raw}) cache sizes are all set; the driver refuses a disk with all three. Remove one of them.`,
      related: [
        { message: 'L2 cache set here', pointer: l2Cache.pointer, range: l2Cache.range },
        { message: 'refcount cache set here', pointer: refcountCache.pointer, range: refcountCache.range },
      ],
    });
  },
};
