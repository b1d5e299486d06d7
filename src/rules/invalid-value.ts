import { cacheOptionsProblems } from '../core/cache';
import { asWritten, size } from './format';
import { declareRule, relatedAt } from './types';
import { say } from './wording';

const WORDING = {
  /** A value the reader could not read (src/model/disks.ts says why). */
  unreadable: '{field}: {problem}',
  noSize: 'disk "{disk}" has no virtual size: nothing at {selector}, so its caches cannot be sized',
  noSizeSelector: 'disk "{disk}" cannot be sized: the mapping file has no fields.disk.size selector',
  partAboveCombined: '{part} {written} ({bytes}) is larger than combinedCache {combined} ({combinedBytes}); the combined size holds the L2 and refcount caches together, so the driver refuses the disk. Lower {part} or raise combinedCache.',
  combinedHere: 'combined cache set here',
} as const;

/**
 * Values that cannot be read are reported by the orchestrator from the problems found while reading
 * them; this hook adds the values that read well but contradict each other: an L2 or refcount cache
 * larger than the combined cache that holds both ([CACHE]: the driver refuses such a disk).
 */
export const invalidValue = declareRule({
  id: 'invalid-value',
  severity: 'error',
  description: 'A size, interval or flag cannot be read, or is out of range.',
  fixable: false,
  wording: WORDING,
  checkDisk({ disk, report }) {
    const { l2Cache, refcountCache, combinedCache } = disk.values;
    if (!combinedCache) return;
    const problems = cacheOptionsProblems({ l2Cache: l2Cache?.value, refcountCache: refcountCache?.value, combinedCache: combinedCache.value });
    for (const problem of problems) {
      if (problem.kind !== 'part-above-combined') continue;
      const part = disk.values[problem.part];
      if (!part) continue;
      report({
        at: problem.part,
        says: 'partAboveCombined',
        fill: { part: problem.part, written: asWritten(part.raw), bytes: size(part.value), combined: asWritten(combinedCache.raw), combinedBytes: size(combinedCache.value) },
        related: [relatedAt(say(WORDING, 'combinedHere'), combinedCache)],
      });
    }
  },
});
