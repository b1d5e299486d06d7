import { HOST_FILESYSTEM_BLOCK } from '../core/profiles';
import { KiB, l2FullCoverage } from '../core/sizing';
import { size } from './format';
import { docsPage, type Rule } from './types';

const LARGE_CLUSTER = 256n * KiB;

export const cacheEntrySizeSuggested: Rule<'cache-entry-size-suggested'> = {
  id: 'cache-entry-size-suggested',
  severity: 'info',
  description: 'Large clusters with a cache below full coverage: whole-table cache entries make each miss read a whole cluster of L2 entries.',
  fixable: true,
  docs: docsPage('cache-entry-size-suggested'),
  checkDisk({ disk, top, report, fix }) {
    const { clusterSize, virtualSize, extendedL2 } = top.geometry;
    if (clusterSize < LARGE_CLUSTER || disk.values.cacheEntrySize || top.entrySize !== clusterSize) return;
    if (top.l2Covered >= virtualSize) return;
    const slice = HOST_FILESYSTEM_BLOCK;
    const sliced = l2FullCoverage(virtualSize, clusterSize, extendedL2, slice);
    report({
      at: disk.values.l2Cache ? 'l2Cache' : undefined,
      message: `with ${size(clusterSize)} clusters each L2 cache miss reads a whole ${size(clusterSize)} table; ${size(slice)} cache entries read only the part needed (full coverage with them: ${size(sliced)}).`,
      fix: fix.setSize('cacheEntrySize', slice, `Use ${size(slice)} L2 cache entries`),
    });
  },
};
