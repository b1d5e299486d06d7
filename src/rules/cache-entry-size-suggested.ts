import { HOST_FILESYSTEM_BLOCK } from '../core/profiles';
import { KiB, l2FullCoverage } from '../core/sizing';
import { size } from './format';
import { declareRule } from './types';
import { say } from './wording';

const LARGE_CLUSTER = 256n * KiB;

const WORDING = {
  wholeTableMisses: 'with {cluster} clusters each L2 cache miss reads a whole {cluster} table; {slice} cache entries read only the part needed (full coverage with them: {full}).',
  useSlices: 'Use {slice} L2 cache entries',
} as const;

export const cacheEntrySizeSuggested = declareRule({
  id: 'cache-entry-size-suggested',
  severity: 'info',
  description: 'Large clusters with a cache below full coverage: whole-table cache entries make each miss read a whole cluster of L2 entries.',
  fixable: true,
  wording: WORDING,
  checkDisk({ disk, top, report, fix }) {
    const { clusterSize, virtualSize, extendedL2 } = top.geometry;
    if (clusterSize < LARGE_CLUSTER || disk.values.cacheEntrySize || top.entrySize !== clusterSize) return;
    if (top.l2Covered >= virtualSize) return;
    const slice = HOST_FILESYSTEM_BLOCK;
    const sliced = l2FullCoverage(virtualSize, clusterSize, extendedL2, slice);
    report({
      at: disk.values.l2Cache ? 'l2Cache' : undefined,
      says: 'wholeTableMisses',
      fill: { cluster: size(clusterSize), slice: size(slice), full: size(sliced) },
      fix: fix.setSize('cacheEntrySize', slice, say(WORDING, 'useSlices', { slice: size(slice) })),
    });
  },
});
