// What the machines placed on one hypervisor host ask of it: their disk caches summed over every
// disk and backing layer, their guest RAM, and the host's cache share in bytes. The host rule
// judges these numbers; the editor's status bar and panel show them.
import { cacheBudgetOf } from './sizing';

export interface HostLoad {
  /** Disk caches of every machine on the host. */
  caches: bigint;
  /** Guest RAM of the machines whose memory is known. */
  guestMemory: bigint;
  /** How many of the machines have a known memory. */
  withMemory: number;
  /** The host's cache share in bytes; absent when its memory is unknown. */
  allowed?: bigint;
  /** Guest RAM plus caches: what the host must hold before its own needs. */
  needed: bigint;
}

export function hostLoadOf(machines: readonly { memory?: bigint; cacheMemoryTotal: bigint }[], budget?: { memory: bigint; cacheShare: number }): HostLoad {
  let caches = 0n;
  let guestMemory = 0n;
  let withMemory = 0;
  for (const machine of machines) {
    caches += machine.cacheMemoryTotal;
    if (machine.memory === undefined) continue;
    guestMemory += machine.memory;
    withMemory++;
  }
  return { caches, guestMemory, withMemory, ...(budget ? { allowed: cacheBudgetOf(budget.memory, budget.cacheShare) } : {}), needed: guestMemory + caches };
}
