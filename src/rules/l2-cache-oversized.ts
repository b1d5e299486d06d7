import { maxOf, minimumL2Cache } from '../core/sizing';
import { size } from './format';
import { docsPage, type Rule } from './types';

export const l2CacheOversized: Rule<'l2-cache-oversized'> = {
  id: 'l2-cache-oversized',
  severity: 'info',
  description: 'A configured L2 cache is larger than full coverage: the memory above it is never used.',
  fixable: true,
  docs: docsPage('l2-cache-oversized'),
  checkDisk({ disk, top, report, fix }) {
    const l2Cache = disk.values.l2Cache;
    if (!l2Cache) return;
    const full = maxOf(top.l2FullCoverage, minimumL2Cache(top.entrySize));
    if (l2Cache.value <= full) return;
    report({
      at: 'l2Cache',
      message: `the L2 cache of ${size(l2Cache.value)} is more than this ${size(top.geometry.virtualSize)} disk can use: ${size(full)} maps all of it, so ${size(l2Cache.value - full)} is never used.`,
      fix: fix.setSize('l2Cache', full, `Lower the L2 cache to ${size(full)} (full coverage)`),
    });
  },
};
