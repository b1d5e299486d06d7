import type { Fix } from '../core/results';
import { isAligned, roundUp } from '../core/sizing';
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
    const combined = disk.values.combinedCache;
    // A part rounded up past the combined size would be refused by the driver (invalid-value): the
    // combined size is raised with it, to whole clusters.
    const roundedFix = (field: SizeField, rounded: bigint): Fix | undefined => {
      const own = fix.setSize(field, rounded, `Round ${field} up to ${size(rounded)}`);
      if (field === 'combinedCache' || !combined || rounded <= combined.value || !own) return own;
      const raised = roundUp(rounded, cluster);
      const grown = fix.setSize('combinedCache', raised, '');
      return grown ? { title: `Round ${field} up to ${size(rounded)} and raise combinedCache to ${size(raised)}`, edits: [...own.edits, ...grown.edits] } : undefined;
    };
    for (const [field, unit, unitName] of checks) {
      const value = disk.values[field];
      if (!value || value.value === 0n || isAligned(value.value, unit)) continue;
      const rounded = roundUp(value.value, unit);
      report({
        at: field,
        message: `${field} ${value.raw} (${value.value} bytes) is not a multiple of ${unitName} (${size(unit)}); it holds whole entries, so ${size(rounded)} is what it really needs.`,
        fix: roundedFix(field, rounded),
      });
    }
  },
};
