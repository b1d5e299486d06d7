import { RECOMMENDED_CLEANUP_INTERVAL } from '../core/profiles';
import { count, interval, size } from './format';
import { declareRule } from './types';
import { say } from './wording';

const WORDING = {
  staysInMemory: '{off}, yet {why}: idle entries stay in memory. Cleaning every {every} frees them.',
  setToZero: 'cleanup is set to 0 (off)',
  notSet: 'no cleanup interval is set and the {generation} driver default is off',
  aboveDefault: 'the L2 cache of {cache} is above the driver default of {default}',
  oneBackingLayer: '1 backing layer keeps caches of {caches} for regions the overlay may have taken over',
  backingLayers: '{count} backing layers keep caches of {caches} for regions the overlay may have taken over',
  both: '{first}, and {second}',
  cleanEvery: 'Clean idle cache entries every {every}',
} as const;

export const cleanupIntervalMissing = declareRule({
  id: 'cleanup-interval-missing',
  severity: 'warning',
  description: 'A cache larger than the driver default, or a backing chain, keeps stale entries because no idle cleanup runs.',
  fixable: true,
  wording: WORDING,
  checkDisk({ disk, top, sizing, profile, report, fix }) {
    if (top.cleanupInterval > 0) return;
    const defaultL2 = profile.defaultL2Cache(top.l2FullCoverage, top.geometry.clusterSize);
    const larger = top.l2Source !== 'default' && top.l2 > defaultL2;
    const chain = sizing.layers.length > 1;
    if (!larger && !chain) return;
    const backing = sizing.layers.length - 1;
    const caches = size(sizing.report.cacheMemoryTotal - top.l2 - top.refcount);
    const chainWhy = backing === 1 ? say(WORDING, 'oneBackingLayer', { caches }) : say(WORDING, 'backingLayers', { count: count(backing), caches });
    const largerWhy = say(WORDING, 'aboveDefault', { cache: size(top.l2), default: size(defaultL2) });
    const why = larger && chain ? say(WORDING, 'both', { first: largerWhy, second: chainWhy }) : larger ? largerWhy : chainWhy;
    const off = disk.values.cleanupInterval ? say(WORDING, 'setToZero') : say(WORDING, 'notSet', { generation: profile.generation });
    const every = interval(RECOMMENDED_CLEANUP_INTERVAL);
    report({
      at: disk.values.cleanupInterval ? 'cleanupInterval' : undefined,
      says: 'staysInMemory',
      fill: { off, why, every },
      fix: fix.setInterval('cleanupInterval', RECOMMENDED_CLEANUP_INTERVAL, say(WORDING, 'cleanEvery', { every })),
    });
  },
});
