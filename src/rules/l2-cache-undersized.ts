import { l2CoveredBytes, minimumRefcountCache } from '../core/sizing';
import type { LayerCache } from '../core/cache';
import { modelCache } from '../core/cachemodel';
import { accessOfPattern } from '../core/workload';
import { share, size } from './format';
import { docsPage, type Rule } from './types';

/** What the miss rate costs, from the cache model (FACTS.md [IRM], [CHE]). */
function prediction(top: LayerCache, pattern: string, requestSize: bigint): string {
  const access = accessOfPattern(pattern);
  if (!access.ok) return '';
  const { virtualSize, clusterSize, extendedL2 } = top.geometry;
  const model = modelCache({ virtualSize, clusterSize, extendedL2, entrySize: top.entrySize, cacheBytes: top.l2, access: access.value, ioSize: requestSize });
  if (!model.ok) return '';
  // Rounded down, so a ratio just short of 1 never reads as "100.0%".
  const hits = (Math.floor(model.value.hitRatio * 1000) / 10).toFixed(1);
  const misses = Math.round(model.value.missesPer1000);
  return ` Under ${pattern} access it predicts ${hits}% L2 hits, ${misses} extra metadata reads per 1,000 guest I/Os; full coverage: 100% and none.`;
}

export const l2CacheUndersized: Rule<'l2-cache-undersized'> = {
  id: 'l2-cache-undersized',
  severity: 'warning',
  description: 'The effective L2 cache maps less than the whole virtual disk, so random I/O pays extra metadata reads.',
  fixable: true,
  docs: docsPage('l2-cache-undersized'),
  checkDisk({ disk, top, sizing, pattern, requestSize, report, fix }) {
    const { virtualSize, clusterSize, extendedL2 } = top.geometry;
    if (l2CoveredBytes(top.l2, clusterSize, extendedL2, top.entrySize) >= virtualSize) return;
    const need = sizing.recommended.l2Cache;
    const where = top.l2Source === 'default' ? 'the driver default L2 cache' : top.l2Source === 'combined' ? 'the L2 share of the combined cache' : 'the L2 cache';
    const message = `${where} of ${size(top.l2)} maps ${size(top.l2Covered)} of this ${size(virtualSize)} disk (${share(top.l2Covered, virtualSize)}); full coverage needs ${size(need)} (${size(need - top.l2)} more memory per open disk).${prediction(top, pattern, requestSize)}`;
    const { combinedCache, l2Cache } = disk.values;
    if (combinedCache && !l2Cache) {
      const total = need + (disk.values.refcountCache?.value ?? minimumRefcountCache(clusterSize));
      report({ at: 'combinedCache', message, fix: fix.setSize('combinedCache', total, `Set the combined cache to ${size(total)}`) });
      return;
    }
    report({ at: l2Cache ? 'l2Cache' : undefined, message, fix: fix.setSize('l2Cache', need, `Set the L2 cache to ${size(need)} (full coverage)`) });
  },
};
