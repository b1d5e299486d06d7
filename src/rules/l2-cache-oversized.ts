import { maxOf, minimumL2Cache } from '../core/sizing';
import { size } from './format';
import { declareRule } from './types';
import { say } from './wording';

const WORDING = {
  beyondFull: 'the L2 cache of {cache} is more than this {disk} disk can use: {full} maps all of it, so {unused} is never used.',
  lowerToFull: 'Lower the L2 cache to {full} (full coverage)',
} as const;

export const l2CacheOversized = declareRule({
  id: 'l2-cache-oversized',
  severity: 'info',
  description: 'A configured L2 cache is larger than full coverage: the memory above it is never used.',
  fixable: true,
  wording: WORDING,
  checkDisk({ disk, top, report, fix }) {
    const l2Cache = disk.values.l2Cache;
    if (!l2Cache) return;
    const full = maxOf(top.l2FullCoverage, minimumL2Cache(top.entrySize));
    if (l2Cache.value <= full) return;
    report({
      at: 'l2Cache',
      says: 'beyondFull',
      fill: { cache: size(l2Cache.value), disk: size(top.geometry.virtualSize), full: size(full), unused: size(l2Cache.value - full) },
      fix: fix.setSize('l2Cache', full, say(WORDING, 'lowerToFull', { full: size(full) })),
    });
  },
});
