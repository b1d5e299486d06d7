import { machineCacheUse } from '../core/sizing';
import { ratio, share, size } from './format';
import { docsPage, type Rule } from './types';

export const machineCacheBudget: Rule<'machine-cache-budget'> = {
  id: 'machine-cache-budget',
  severity: 'warning',
  description: "A machine's cache memory over all its disks and backing layers exceeds the budget share of its RAM.",
  fixable: false,
  docs: docsPage('machine-cache-budget'),
  checkMachine({ machine, disks, mapping, report }) {
    const memory = machine.memory?.value;
    if (!memory || disks.length === 0) return;
    const { total, budget } = machineCacheUse(disks.map((d) => d.sizing.report.cacheMemoryTotal), memory, mapping.cacheShareOfMemory);
    if (budget === undefined || total <= budget) return;
    report({
      at: machine.memory,
      message: `disk caches of ${machine.name} take ${size(total)} over ${disks.length} disk${disks.length > 1 ? 's' : ''}, ${share(total, memory)} of its ${size(memory)} RAM; the budget is ${ratio(mapping.cacheShareOfMemory)} (${size(budget)}). Check the host's headroom before raising caches.`,
      related: disks.map((d) => ({ message: `${d.disk.name}: ${size(d.sizing.report.cacheMemoryTotal)} over ${d.sizing.layers.length} layer${d.sizing.layers.length > 1 ? 's' : ''}`, pointer: d.disk.pointer, range: d.disk.range })),
    });
  },
};
