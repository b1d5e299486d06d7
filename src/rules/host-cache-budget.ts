// The caches of every disk and backing layer of every machine on one hypervisor host, summed across
// all the files linted: over the host's cache share is a warning; guest RAM plus caches above the
// host's memory is an error. Reported once per host, at the first machine placed there.
import { hostLoadOf } from '../core/host-load';
import { ratio, size } from './format';
import { docsPage, type Rule } from './types';

const machinesWord = (count: number) => `${count} machine${count === 1 ? '' : 's'}`;

export const hostCacheBudget: Rule<'host-cache-budget'> = {
  id: 'host-cache-budget',
  severity: 'warning',
  description: "The disk caches of all machines on a host exceed the host's cache share (warning), or guest RAM plus caches exceed its memory (error).",
  fixable: false,
  docs: docsPage('host-cache-budget'),
  checkHost({ host, budget, machines, report }) {
    if (!budget || machines.length === 0) return;
    const { caches, guestMemory, withMemory, needed, allowed = 0n } = hostLoadOf(machines, budget);
    const related = machines.map((m) => ({
      message: `${m.name}: ${m.memory !== undefined ? `${size(m.memory)} RAM, ` : ''}${size(m.cacheMemoryTotal)} of disk caches`,
      pointer: m.pointer,
      range: m.range,
      file: m.file,
    }));
    const memoryNote = budget.listed ? '' : ' (assume.hostMemory)';
    if (needed > budget.memory) {
      const partial = withMemory < machines.length ? ` (RAM known for ${withMemory} of them)` : '';
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
      message: `disk caches of the ${machinesWord(machines.length)} on host ${host} take ${size(caches)}, ${ratio(Number(caches) / Number(budget.memory), 2)} of its ${size(budget.memory)}${memoryNote}; the host's cache share is ${ratio(budget.cacheShare, 2)} (${size(allowed)}). Each open disk and backing layer has caches of its own.`,
      related,
    });
  },
};
