import { RECOMMENDED_CLEANUP_INTERVAL } from '../core/profiles';
import { size } from './format';
import { docsPage, type Rule } from './types';

export const cleanupIntervalMissing: Rule<'cleanup-interval-missing'> = {
  id: 'cleanup-interval-missing',
  severity: 'warning',
  description: 'A cache larger than the driver default, or a backing chain, keeps stale entries because no idle cleanup runs.',
  fixable: true,
  docs: docsPage('cleanup-interval-missing'),
  checkDisk({ disk, top, sizing, profile, report, fix }) {
    if (top.cleanupInterval > 0) return;
    const defaultL2 = profile.defaultL2Cache(top.l2FullCoverage, top.geometry.clusterSize);
    const larger = top.l2Source !== 'default' && top.l2 > defaultL2;
    const chain = sizing.layers.length > 1;
    if (!larger && !chain) return;
    const why = [
      larger ? `the L2 cache of ${size(top.l2)} is above the driver default of ${size(defaultL2)}` : '',
      chain ? `${sizing.layers.length - 1} backing layer${sizing.layers.length > 2 ? 's keep' : ' keeps'} caches of ${size(sizing.report.cacheMemoryTotal - top.l2 - top.refcount)} for regions the overlay may have taken over` : '',
    ].filter(Boolean).join(', and ');
    const off = disk.values.cleanupInterval ? 'cleanup is set to 0 (off)' : `no cleanup interval is set and the ${profile.generation} driver default is off`;
    report({
      at: disk.values.cleanupInterval ? 'cleanupInterval' : undefined,
      message: `${off}, yet ${why}: idle entries stay in memory. Cleaning every ${RECOMMENDED_CLEANUP_INTERVAL} s frees them.`,
      fix: fix.setInterval('cleanupInterval', RECOMMENDED_CLEANUP_INTERVAL, `Clean idle cache entries every ${RECOMMENDED_CLEANUP_INTERVAL} s`),
    });
  },
};
