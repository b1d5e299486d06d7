import type { Fix } from '../core/results';
import { isAligned, roundUp } from '../core/sizing';
import { asWritten, exactBytes, size } from './format';
import { declareRule, type SizeField } from './types';
import { say } from './wording';

const WORDING = {
  notWhole: '{field} {written} ({bytes} bytes) is not a multiple of {unitName} ({unit}); it holds whole entries, so {rounded} is what it really needs.',
  clusterUnit: 'the cluster size',
  entryUnit: 'the cache entry size',
  roundUp: 'Round {field} up to {rounded}',
  roundUpAndCombined: 'Round {field} up to {rounded} and raise combinedCache to {combined}',
} as const;

export const cacheNotAligned = declareRule({
  id: 'cache-not-aligned',
  severity: 'warning',
  description: 'A cache size is not a multiple of its cache entry size, so the driver rounds it.',
  fixable: true,
  wording: WORDING,
  checkDisk({ disk, top, report, fix }) {
    const cluster = top.geometry.clusterSize;
    const clusterUnit = say(WORDING, 'clusterUnit');
    const checks: [SizeField, bigint, string][] = [
      ['l2Cache', top.entrySize, top.entrySize === cluster ? clusterUnit : say(WORDING, 'entryUnit')],
      ['refcountCache', cluster, clusterUnit],
      ['combinedCache', cluster, clusterUnit],
    ];
    const combined = disk.values.combinedCache;
    // A part rounded up past the combined size would be refused by the driver (invalid-value): the
    // combined size is raised with it, to whole clusters.
    const roundedFix = (field: SizeField, rounded: bigint): Fix | undefined => {
      const own = fix.setSize(field, rounded, say(WORDING, 'roundUp', { field, rounded: size(rounded) }));
      if (field === 'combinedCache' || !combined || rounded <= combined.value || !own) return own;
      const raised = roundUp(rounded, cluster);
      const grown = fix.setSize('combinedCache', raised, '');
      return grown ? { title: say(WORDING, 'roundUpAndCombined', { field, rounded: size(rounded), combined: size(raised) }), edits: [...own.edits, ...grown.edits] } : undefined;
    };
    for (const [field, unit, unitName] of checks) {
      const value = disk.values[field];
      if (!value || value.value === 0n || isAligned(value.value, unit)) continue;
      const rounded = roundUp(value.value, unit);
      report({
        at: field,
        says: 'notWhole',
        fill: { field, written: asWritten(value.raw), bytes: exactBytes(value.value), unitName, unit: size(unit), rounded: size(rounded) },
        fix: roundedFix(field, rounded),
      });
    }
  },
});
