import { cacheOptionsProblems } from '../core/cache';
import { size } from './format';
import { docsPage, type Rule } from './types';

/**
 * Values that cannot be read are reported by the orchestrator from the problems found while reading
 * them; this hook adds the values that read well but contradict each other: an L2 or refcount cache
 * larger than the combined cache that holds both ([CACHE]: the driver refuses such a disk).
 */
export const invalidValue: Rule<'invalid-value'> = {
  id: 'invalid-value',
  severity: 'error',
  description: 'A size, interval or flag cannot be read, or is out of range.',
  fixable: false,
  docs: docsPage('invalid-value'),
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
        message: `${problem.part} ${part.raw} (${size(part.value)}) is larger than combinedCache ${combinedCache.raw} (${size(combinedCache.value)}); the combined size holds the L2 and refcount caches together, so the driver refuses the disk. Lower ${problem.part} or raise combinedCache.`,
        related: [{ message: 'combined cache set here', pointer: combinedCache.pointer, range: combinedCache.range }],
      });
    }
  },
};
