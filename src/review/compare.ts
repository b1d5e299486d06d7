// Base against head (docs/cli.md): which findings a change brings and settles, what it does to
// the cache memory of each machine and host, and which disks it adds, removes, resizes or re-tunes.
// Both sides come in as lint results; this module only pairs them up.
import type { Finding, Severity, SizingReport } from '../core/results';
import { pointerWithin } from '../model/jsonpath';
import { hostBudget, type HostPlan } from '../model/mapping';
import { identify, pairUp, type IdentifiedFinding } from './identity';
import type { ReviewedDisk, ReviewedFile, ReviewedMachine } from './types';

export interface ComparedFinding {
  rule: string;
  severity: Severity;
  file: string;
  machine?: string;
  disk?: string;
  host?: string;
  line: number;
  column: number;
  message: string;
  fingerprint: string;
  finding: Finding;
}

export interface MemoryChange {
  before: bigint;
  after: bigint;
  delta: bigint;
}

export interface MachineMemory extends MemoryChange {
  name: string;
  /** The host in head (in base when the machine is gone). */
  host?: string;
  /** The file in head (in base when the machine is gone). */
  file: string;
}

export interface HostMemory extends MemoryChange {
  name: string;
  /** The host's memory, when the mapping knows it. */
  memory?: bigint;
  /** The share of its memory the caches may take. */
  cacheShare?: number;
}

export type DiskChangeKind = 'resized' | 're-tuned';

export interface DiskRef {
  file: string;
  machine: string;
  disk: string;
  cacheMemory: bigint;
}

export interface DiskChange extends DiskRef {
  how: DiskChangeKind[];
  before: Pick<SizingReport, 'virtualSize' | 'clusterSize' | 'l2Effective' | 'refcountEffective' | 'cacheMemoryTotal'>;
  after: Pick<SizingReport, 'virtualSize' | 'clusterSize' | 'l2Effective' | 'refcountEffective' | 'cacheMemoryTotal'>;
}

export interface Comparison {
  findings: { new: ComparedFinding[]; settled: ComparedFinding[]; unchanged: number };
  memory: { machines: MachineMemory[]; hosts: HostMemory[]; total: MemoryChange };
  disks: { added: DiskRef[]; removed: DiskRef[]; changed: DiskChange[] };
  /** What head adds: the counts the exit status is decided by. */
  added: { errors: number; warnings: number; infos: number };
}

const change = (before: bigint, after: bigint): MemoryChange => ({ before, after, delta: after - before });
const byText = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);

function compared(item: IdentifiedFinding): ComparedFinding {
  const { finding, subject } = item;
  return {
    rule: finding.rule,
    severity: finding.severity,
    file: subject.file,
    ...(subject.machine !== undefined ? { machine: subject.machine } : {}),
    ...(subject.disk !== undefined ? { disk: subject.disk } : {}),
    ...(subject.host !== undefined ? { host: subject.host } : {}),
    line: finding.range.line,
    column: finding.range.column,
    message: finding.message,
    fingerprint: item.fingerprint,
    finding,
  };
}

const SEVERITY_RANK: Record<Severity, number> = { error: 0, warning: 1, info: 2 };
const byPlace = (a: ComparedFinding, b: ComparedFinding) => SEVERITY_RANK[a.severity] - SEVERITY_RANK[b.severity] || byText(a.file, b.file) || a.line - b.line || a.column - b.column || byText(a.rule, b.rule);

/** A machine's key across the two sides: its name, or its file and pointer when it has none. */
const machineKey = (file: string, machine: Pick<ReviewedMachine, 'name' | 'named' | 'pointer'>) => (machine.named ? `name:${machine.name}` : `at:${file}#${machine.pointer}`);
const machineLabel = (file: string, machine: Pick<ReviewedMachine, 'name' | 'named'>) => (machine.named ? machine.name : `${machine.name} in ${file}`);

interface MachineSide {
  label: string;
  file: string;
  host?: string;
  cache: bigint;
}

function machinesOf(files: readonly ReviewedFile[]): Map<string, MachineSide> {
  const out = new Map<string, MachineSide>();
  for (const file of files) {
    for (const machine of file.machines) {
      const key = machineKey(file.path, machine);
      const seen = out.get(key);
      // One name in two places (a copy left behind, say): their caches both count.
      if (seen) seen.cache += machine.cacheMemoryTotal;
      else out.set(key, { label: machineLabel(file.path, machine), file: file.path, ...(machine.host !== undefined ? { host: machine.host } : {}), cache: machine.cacheMemoryTotal });
    }
  }
  return out;
}

interface DiskSide {
  ref: DiskRef;
  sizing: SizingReport;
  values: ReviewedDisk['values'];
}

/** The values that tune a disk's caches: a change in any of them is a tuning change. */
const CACHE_SETTINGS: ReadonlySet<string> = new Set(['l2Cache', 'refcountCache', 'combinedCache', 'cacheEntrySize', 'cleanupInterval']);

function tuningOf(side: DiskSide): string {
  const settings = Object.entries(side.values ?? {}).flatMap(([key, value]) => (value && CACHE_SETTINGS.has(key) ? [[key, value.raw]] : [])).sort(([a], [b]) => byText(String(a), String(b)));
  const { clusterSize, l2EntryBytes, layers } = side.sizing;
  return JSON.stringify([settings, String(clusterSize), String(l2EntryBytes), layers]);
}

function disksOf(files: readonly ReviewedFile[]): Map<string, DiskSide[]> {
  const out = new Map<string, DiskSide[]>();
  for (const file of files) {
    for (const disk of file.disks) {
      const machine = file.machines.find((m) => m.name === disk.machine && pointerWithin(disk.pointer, m.pointer));
      const machineId = machine ? machineKey(file.path, machine) : `name:${disk.machine}`;
      const diskId = disk.named ? disk.name : disk.pointer;
      const key = `${file.path}\u0000${machineId}\u0000${diskId}`;
      const ref: DiskRef = { file: file.path, machine: machine ? machineLabel(file.path, machine) : disk.machine, disk: disk.named ? disk.name : `${disk.name} (${disk.pointer})`, cacheMemory: disk.sizing.cacheMemoryTotal };
      out.set(key, [...(out.get(key) ?? []), { ref, sizing: disk.sizing, values: disk.values }]);
    }
  }
  return out;
}

const sizingFacts = (s: SizingReport): DiskChange['before'] => ({
  virtualSize: s.virtualSize, clusterSize: s.clusterSize, l2Effective: s.l2Effective, refcountEffective: s.refcountEffective, cacheMemoryTotal: s.cacheMemoryTotal,
});

function diskChanges(base: readonly ReviewedFile[], head: readonly ReviewedFile[]): Comparison['disks'] {
  const before = disksOf(base);
  const after = disksOf(head);
  const disks: Comparison['disks'] = { added: [], removed: [], changed: [] };
  for (const [key, heads] of after) {
    const bases = before.get(key) ?? [];
    heads.forEach((now, i) => {
      const was = bases[i];
      if (!was) {
        disks.added.push(now.ref);
        return;
      }
      const how: DiskChangeKind[] = [];
      if (was.sizing.virtualSize !== now.sizing.virtualSize) how.push('resized');
      // Re-tuned: the settings written or the layout changed (a resize alone moves default caches too).
      if (tuningOf(was) !== tuningOf(now)) how.push('re-tuned');
      if (how.length > 0) disks.changed.push({ ...now.ref, how, before: sizingFacts(was.sizing), after: sizingFacts(now.sizing) });
    });
    for (const gone of bases.slice(heads.length)) disks.removed.push(gone.ref);
  }
  for (const [key, bases] of before) if (!after.has(key)) disks.removed.push(...bases.map((b) => b.ref));
  const byRef = (a: DiskRef, b: DiskRef) => byText(a.file, b.file) || byText(a.machine, b.machine) || byText(a.disk, b.disk);
  disks.added.sort(byRef);
  disks.removed.sort(byRef);
  disks.changed.sort(byRef);
  return disks;
}

function memoryChanges(base: readonly ReviewedFile[], head: readonly ReviewedFile[], hosts: HostPlan): Comparison['memory'] {
  const before = machinesOf(base);
  const after = machinesOf(head);
  const machines: MachineMemory[] = [];
  const perHost = new Map<string, { before: bigint; after: bigint }>();
  const onHost = (host: string | undefined, side: 'before' | 'after', bytes: bigint) => {
    if (host === undefined) return;
    const sums = perHost.get(host) ?? { before: 0n, after: 0n };
    sums[side] += bytes;
    perHost.set(host, sums);
  };
  for (const key of new Set([...before.keys(), ...after.keys()])) {
    const was = before.get(key);
    const now = after.get(key);
    const shown = (now ?? was) as MachineSide;
    const host = now ? now.host : was?.host;
    machines.push({ name: shown.label, ...(host !== undefined ? { host } : {}), file: shown.file, ...change(was?.cache ?? 0n, now?.cache ?? 0n) });
    onHost(was?.host, 'before', was?.cache ?? 0n);
    onHost(now?.host, 'after', now?.cache ?? 0n);
  }
  machines.sort((a, b) => byText(a.name, b.name) || byText(a.file, b.file));
  const hostRows: HostMemory[] = [...perHost].map(([name, sums]) => {
    const budget = hostBudget(hosts, name);
    return { name, ...(budget ? { memory: budget.memory, cacheShare: budget.cacheShare } : {}), ...change(sums.before, sums.after) };
  });
  hostRows.sort((a, b) => byText(a.name, b.name));
  const sum = (side: ReadonlyMap<string, MachineSide>) => [...side.values()].reduce((total, m) => total + m.cache, 0n);
  return { machines, hosts: hostRows, total: change(sum(before), sum(after)) };
}

export function compareRuns(base: readonly ReviewedFile[], head: readonly ReviewedFile[], hosts: HostPlan): Comparison {
  const { kept, added, gone } = pairUp(identify(base), identify(head));
  const fresh = added.map(compared).sort(byPlace);
  const counts = { errors: 0, warnings: 0, infos: 0 };
  for (const f of fresh) counts[f.severity === 'error' ? 'errors' : f.severity === 'warning' ? 'warnings' : 'infos']++;
  return {
    findings: { new: fresh, settled: gone.map(compared).sort(byPlace), unchanged: kept.length },
    memory: memoryChanges(base, head, hosts),
    disks: diskChanges(base, head),
    added: counts,
  };
}
