// The caches of every disk and backing layer of every machine on one hypervisor host, summed across
// all the files linted: over the host's cache share is a warning; guest RAM plus caches above the
// host's memory is an error. Reported once per host, at the first machine placed there.
import { cacheBudgetOf } from '../core/sizing';
import { formatPercent } from '../core/units';
import { size } from './format';
import { docsPage, type Rule } from './types';

const percent = (fraction: number) => `${Number((fraction * 100).toPrecision(12))}%`;
const machinesWord = (count: number) => `${count} machine${count === 1 ? '' : 's'}`;

export const hostCacheBudget: Rule<'host-cache-budget'> = {
  id: 'host-cache-budget',
  severity: 'warning',
  description: "The disk caches of all machines on a host exceed the host's cache share (warning), or guest RAM plus caches exceed its memory (error).",
  fixable: false,
  docs: docsPage('host-cache-budget'),
  checkHost({ host, budget, machines, report }) {
    if (!budget || machines.length === 0) return;
    const caches = machines.reduce((sum, m) => sum + m.cacheMemoryTotal, 0n);
    const withMemory = machines.filter((m) => m.memory !== undefined);
    const guestMemory = withMemory.reduce((sum, m) => sum + (m.memory ?? 0n), 0n);
    const allowed = cacheBudgetOf(budget.memory, budget.cacheShare);
    const needed = guestMemory + caches;
    const related = machines.map((m) => ({
      message: `${m.name}: ${m.memory !== undefined ? `${size(m.memory)} RAM, ` : ''}${size(m.cacheMemoryTotal)} of disk caches`,
      pointer: m.pointer,
      range: m.range,
      file: m.file,
    }));
    const memoryNote = budget.listed ? '' : ' (assume.hostMemory)';
    if (needed > budget.memory) {
      const partial = withMemory.length < machines.length ? ` (RAM known for ${withMemory.length} of them)` : '';
      report({
        severity: 'error',
        message: `host ${host} cannot hold its ${machinesWord(machines.length)}: guest RAM ${size(guestMemory)}${partial} plus disk caches ${size(caches)} make ${size(needed)}, more than its ${size(budget.memory)} of memory${memoryNote}, before the host's own needs. Move a machine or lower its caches.`,
        related,
      });
      return;
    }
    if (caches <= allowed) return;
    report({
      severity: 'warning',
      message: `disk caches of the ${machinesWord(machines.length)} on host ${host} take ${size(caches)}, ${formatPercent(Number(caches) / Number(budget.memory), 2)} of its ${size(budget.memory)}${memoryNote}; the host's cache share is ${percent(budget.cacheShare)} (${size(allowed)}). Each open disk and backing layer has caches of its own.`,
      related,
    });
  },
};
