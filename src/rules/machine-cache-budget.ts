import { machineCacheUse } from '../core/sizing';
import { count, ratio, share, size } from './format';
import { declareRule, relatedAt } from './types';
import { say } from './wording';

const WORDING = {
  overBudget: "disk caches of {machine} take {total} over {disks}, {used} of its {memory} RAM; the budget is {budget} ({budgetBytes}). Check the host's headroom before raising caches.",
  oneDisk: '1 disk',
  disks: '{count} disks',
  diskUse: '{disk}: {caches} over {layers}',
  oneLayer: '1 layer',
  layers: '{count} layers',
} as const;

export const machineCacheBudget = declareRule({
  id: 'machine-cache-budget',
  severity: 'warning',
  description: "A machine's cache memory over all its disks and backing layers exceeds the budget share of its RAM.",
  fixable: false,
  wording: WORDING,
  checkMachine({ machine, disks, mapping, report }) {
    const memory = machine.memory?.value;
    if (!memory || disks.length === 0) return;
    const { total, budget } = machineCacheUse(disks.map((d) => d.sizing.report.cacheMemoryTotal), memory, mapping.cacheShareOfMemory);
    if (budget === undefined || total <= budget) return;
    report({
      at: machine.memory,
      says: 'overBudget',
      fill: {
        machine: machine.name,
        total: size(total),
        disks: disks.length > 1 ? say(WORDING, 'disks', { count: count(disks.length) }) : say(WORDING, 'oneDisk'),
        used: share(total, memory),
        memory: size(memory),
        budget: ratio(mapping.cacheShareOfMemory),
        budgetBytes: size(budget),
      },
      related: disks.map((d) => {
        const layers = d.sizing.layers.length;
        const over = layers > 1 ? say(WORDING, 'layers', { count: count(layers) }) : say(WORDING, 'oneLayer');
        return relatedAt(say(WORDING, 'diskUse', { disk: d.disk.name, caches: size(d.sizing.report.cacheMemoryTotal), layers: over }), d.disk);
      }),
    });
  },
});
