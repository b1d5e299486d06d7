import { roundUp } from '../core/sizing';
import { size } from './format';
import { docsPage, type Rule, type SizeField } from './types';

export const cacheNotAligned: Rule<'cache-not-aligned'> = {
  id: 'cache-not-aligned',
  severity: 'warning',
  description: 'A cache size is not a multiple of its cache entry size, so the driver rounds it.',
  fixable: true,
  docs: docsPage('cache-not-aligned'),
  checkDisk({ disk, top, report, fix }) {
    const cluster = top.geometry.clusterSize;
    const checks: [SizeField, bigint, string][] = [
      ['l2Cache', top.entrySize, top.entrySize === cluster ? 'the cluster size' : 'the cache entry size'],
      ['refcountCache', cluster, 'the cluster size'],
      ['combinedCache', cluster, 'the cluster size'],
    ];
    for (const [field, unit, unitName] of checks) {
      const value = disk.values[field];
      if (!value || value.value === 0n || value.value % unit === 0n) continue;
      const rounded = roundUp(value.value, unit);
      report({
        at: field,
        message: `${field} ${value.raw} (${value.value} bytes) is not a multiple of ${unitName} (${size(unit)}); it holds whole entries, so ${size(rounded)} is what it really needs.`,
        fix: fix.setSize(field, rounded, `Round ${field} up to ${size(rounded)}`),
      });
    }
  },
};
