// The caches of every disk and backing layer of every machine on one hypervisor host, summed across
// all the files linted: over the host's cache share is a warning; guest RAM plus caches above the
// host's memory is an error. Reported once per host, at the first machine placed there.
import { hostLoadOf } from '../core/host-load';
import { count, ratio, size } from './format';
import { declareRule } from './types';
import { say } from './wording';

const WORDING = {
  overMemory: "host {host} cannot hold its {machines}: guest RAM {guestMemory}{partial} plus disk caches {caches} make {needed}, more than its {memory} of memory{memoryNote}, before the host's own needs. Move a machine or lower its caches.",
  overShare: "disk caches of the {machines} on host {host} take {caches}, {used} of its {memory}{memoryNote}; the host's cache share is {share} ({allowed}). Each open disk and backing layer has caches of its own.",
  oneMachine: '1 machine',
  machines: '{count} machines',
  ramKnownFor: ' (RAM known for {known} of them)',
  assumedMemory: ' (assume.hostMemory)',
  machineUse: '{machine}: {ram}{caches} of disk caches',
  machineRam: '{ram} RAM, ',
} as const;

const machinesWord = (n: number): string => (n === 1 ? say(WORDING, 'oneMachine') : say(WORDING, 'machines', { count: count(n) }));

export const hostCacheBudget = declareRule({
  id: 'host-cache-budget',
  severity: 'warning',
  description: "The disk caches of all machines on a host exceed the host's cache share (warning), or guest RAM plus caches exceed its memory (error).",
  fixable: false,
  wording: WORDING,
  checkHost({ host, budget, machines, report }) {
    if (!budget || machines.length === 0) return;
    const { caches, guestMemory, withMemory, needed, allowed = 0n } = hostLoadOf(machines, budget);
    const related = machines.map((m) => ({
      message: say(WORDING, 'machineUse', { machine: m.name, ram: m.memory !== undefined ? say(WORDING, 'machineRam', { ram: size(m.memory) }) : '', caches: size(m.cacheMemoryTotal) }),
      pointer: m.pointer,
      range: m.range,
      file: m.file,
    }));
    const memoryNote = budget.listed ? '' : say(WORDING, 'assumedMemory');
    if (needed > budget.memory) {
      const partial = withMemory < machines.length ? say(WORDING, 'ramKnownFor', { known: count(withMemory) }) : '';
      report({
        severity: 'error',
        says: 'overMemory',
        fill: { host, machines: machinesWord(machines.length), guestMemory: size(guestMemory), partial, caches: size(caches), needed: size(needed), memory: size(budget.memory), memoryNote },
        related,
      });
      return;
    }
    if (caches <= allowed) return;
    report({
      severity: 'warning',
      says: 'overShare',
      fill: { machines: machinesWord(machines.length), host, caches: size(caches), used: ratio(Number(caches) / Number(budget.memory), 2), memory: size(budget.memory), memoryNote, share: ratio(budget.cacheShare, 2), allowed: size(allowed) },
      related,
    });
  },
});
