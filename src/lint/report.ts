// The one result of linting a file: per disk its sizing and values, per machine its budget, and the
// findings in the order they are shown. Front ends only format it.
import type { DiskSizing, LayerCache, LayerSpec } from '../core/cache';
import type { Mapping } from '../model/mapping';
import type { Finding, SourceRange } from '../core/results';
import { machineCacheUse } from '../core/sizing';
import type { DiskSpec, DiskValues, Located, MachineSpec } from '../model/disks';
import { RULE_IDS, type RuleId } from '../rules';
import { applyAcceptances, type AcceptEntryUse, type HostAcceptance } from './acceptance';
import type { FileContext } from './prepare';

/** A finding of one of the registry's rules. */
export type LintFinding = Finding<RuleId>;

/** A value the definition writes: parsed, as written, and where it sits. */
export interface ReportedValue<T> {
  value: T;
  /** The value as written (a number, or the string with its unit). */
  raw: unknown;
  pointer: string;
  range: SourceRange;
}

/** The values a definition writes for a disk, parsed (absent: not written, or not readable). */
export type DiskValuesReport = { [K in keyof DiskValues]?: ReportedValue<NonNullable<DiskValues[K]>['value']> };

export interface DiskReport {
  machine: string;
  name: string;
  /** Whether the name comes from the definition (else it is "disk N", which depends on the index). */
  named: boolean;
  pointer: string;
  range: SourceRange;
  sizing: DiskSizing['report'];
  recommended: DiskSizing['recommended'];
  /** The sizing of every layer of the chain, top first. */
  layers: LayerCache[];
  /** The model's inputs: each layer's geometry and settings exactly as they were sized, top first. */
  chain: LayerSpec[];
  /** The disk's own values as the definition writes them (absent: the driver default applies). */
  values: DiskValuesReport;
  /** Indices into FileReport.findings: the findings at or under this disk. */
  findings: number[];
  extendedL2: boolean;
  requestSize: bigint;
  pattern: string;
  /**
   * With a trace: the measured L2 hit ratio at the effective cache, the traced working set, the
   * smallest cache reaching the target hit ratio (the working set when none does) and the sampling.
   */
  measured?: {
    hitRatio: number;
    workingSet: bigint;
    recommendedL2Cache: bigint;
    sampleRate: number;
    targetHitRatio: number;
    targetReached: boolean;
    requests: number;
    lookups: number;
  };
  /**
   * With a trace, for drawing (not in JSON or SARIF): the measured hit ratio at quarter-octave cache
   * sizes up to the working set and at the effective and recommended caches, and the guest bytes
   * the traced requests fall in.
   */
  measuredCurve?: {
    points: { cacheBytes: bigint; hitRatio: number }[];
    span: { start: bigint; end: bigint };
  };
  /** The image file the definition names, and whether its layers came from the real files. */
  image?: { path: string; read: boolean; layers: { path: string; format: string }[]; problem?: string };
}

export interface MachineReport {
  name: string;
  /** Whether the name comes from the definition or the file (else it is "machine N"). */
  named: boolean;
  pointer: string;
  range: SourceRange;
  memory?: bigint;
  /** The hypervisor host it runs on, and where the definition says so. */
  host?: string;
  hostPointer?: string;
  hostRange?: SourceRange;
  budget?: bigint;
  cacheMemoryTotal: bigint;
  /** Accept comments on the machine or its host line: what they accept of its host's findings. */
  hostAcceptances?: HostAcceptance[];
  /** Indices into FileReport.disks. */
  disks: number[];
  /** Indices into FileReport.findings: the machine's own, not those of its disks. */
  findings: number[];
}

export interface FileReport {
  path: string;
  disks: DiskReport[];
  machines: MachineReport[];
  findings: LintFinding[];
  /** Indices into findings: those under no disk or machine (syntax, accept comments, stray values). */
  fileFindings: number[];
  /** False when the file could not be parsed: --fix must leave it alone. */
  parsed: boolean;
  /** How the mapping file's accept entries that reach this file fared in it (absent when it did not parse). */
  acceptEntries?: AcceptEntryUse[];
}

/** What sizing a disk gave, besides its spec: the rest of its DiskReport is read from the spec when the file is assembled. */
export interface DiskResult {
  sizing: DiskSizing;
  chain: LayerSpec[];
  measured?: DiskReport['measured'];
  measuredCurve?: DiskReport['measuredCurve'];
  image?: DiskReport['image'];
}

/** The findings of one disk (its values and its rules) and its sizing, kept apart so an edit inside it re-checks it alone. */
export interface DiskUnit {
  disk: DiskSpec;
  findings: LintFinding[];
  result?: DiskResult;
}

export interface MachineUnit {
  machine: MachineSpec;
  disks: DiskUnit[];
  /** Problems with the machine's own values. */
  valueFindings: LintFinding[];
  ruleFindings: LintFinding[];
}

/** A file's findings kept by the disk and machine they belong to. */
export interface Units {
  machines: MachineUnit[];
  /** Value problems that belong to no disk or machine. */
  other: LintFinding[];
}

const SEVERITY_ORDER = { error: 0, warning: 1, info: 2 } as const;
const RULE_ORDER = new Map(RULE_IDS.map((id, index) => [id, index]));

function byPlace(a: LintFinding, b: LintFinding): number {
  return a.range.offset - b.range.offset || SEVERITY_ORDER[a.severity] - SEVERITY_ORDER[b.severity] || (RULE_ORDER.get(a.rule) ?? 0) - (RULE_ORDER.get(b.rule) ?? 0);
}

/**
 * The report from a file's units: disks in order, machine sums, findings accepted and sorted.
 * `disksNested` is whether a disk's pointer lies within another's (or repeats it); absent, it is
 * worked out here (the editor session works it out once per full read: edits keep the pointers).
 */
export function assemble(context: FileContext, units: Units, disksNested?: boolean): FileReport {
  const { mapping, document } = context;
  const disks: DiskReport[] = [];
  const machineReports: MachineReport[] = [];
  const findings: LintFinding[] = [...units.other];
  // The disk each disk unit's finding came from: claimFindings confirms it instead of searching.
  const fromDisk = new Map<LintFinding, DiskReport>();
  for (const unit of units.machines) {
    const indices: number[] = [];
    findings.push(...unit.valueFindings);
    const diskTotals: bigint[] = [];
    for (const disk of unit.disks) {
      findings.push(...disk.findings);
      if (!disk.result) continue;
      indices.push(disks.length);
      const report = diskReport(mapping, disk.disk, disk.result);
      disks.push(report);
      for (const finding of disk.findings) fromDisk.set(finding, report);
      diskTotals.push(disk.result.sizing.report.cacheMemoryTotal);
    }
    findings.push(...unit.ruleFindings);
    const { machine } = unit;
    const memory = machine.memory?.value;
    const use = machineCacheUse(diskTotals, memory, mapping.cacheShareOfMemory);
    machineReports.push({
      name: machine.name,
      named: machine.named,
      pointer: machine.pointer,
      range: machine.range,
      memory,
      ...(machine.host ? { host: machine.host.value, hostPointer: machine.host.pointer, hostRange: machine.host.range } : {}),
      budget: use.budget,
      cacheMemoryTotal: use.total,
      disks: indices,
      findings: [],
    });
  }
  const { findings: judged, hostAcceptances, acceptEntries } = applyAcceptances(context, units.machines.map((u) => u.machine), findings);
  for (const machine of machineReports) {
    const accepts = hostAcceptances.get(machine.pointer);
    if (accepts && machine.host !== undefined) machine.hostAcceptances = accepts;
  }
  judged.sort(byPlace);
  const fileFindings = claimFindings(judged, disks, machineReports, disksNested ?? pointersNested(disks.map((d) => d.pointer)) ? undefined : fromDisk);
  return { path: document.path, disks, machines: machineReports, findings: judged, fileFindings, parsed: true, acceptEntries };
}

/**
 * A disk's part of the report, built field by field: it runs for every disk on every keystroke in
 * the editor, and an object spread followed by more fields takes the JavaScript engine's slow path.
 */
function diskReport(mapping: Mapping, disk: DiskSpec, result: DiskResult): DiskReport {
  const { sizing } = result;
  const report: DiskReport = {
    machine: disk.machine.name,
    name: disk.name,
    named: disk.named,
    pointer: disk.pointer,
    range: disk.range,
    sizing: sizing.report,
    recommended: sizing.recommended,
    layers: sizing.layers,
    chain: result.chain,
    extendedL2: sizing.layers[0]?.geometry.extendedL2 ?? false,
    requestSize: disk.values.requestSize?.value ?? mapping.assume.requestSize,
    pattern: disk.values.pattern?.value ?? mapping.assume.pattern,
    values: reportedValues(disk),
    findings: [],
  };
  if (result.measured) report.measured = result.measured;
  if (result.measuredCurve) report.measuredCurve = result.measuredCurve;
  if (result.image) report.image = result.image;
  return report;
}

const reported = <T>(located: Located<T>): ReportedValue<T> => ({ value: located.value, raw: located.raw, pointer: located.pointer, range: located.range });

/**
 * The values a disk writes, in the order the extraction reads them. Field by field on purpose: this
 * runs for every disk on every keystroke, and a loop over key names makes every access a slow
 * lookup by name. DISK_VALUE_KEYS below makes a field added to DiskValues fail to compile until it
 * is added here and in locatedValues.
 */
function reportedValues(disk: DiskSpec): DiskValuesReport {
  const v = disk.values;
  const out: DiskValuesReport = {};
  if (v.size) out.size = reported(v.size);
  if (v.clusterSize) out.clusterSize = reported(v.clusterSize);
  if (v.format) out.format = reported(v.format);
  if (v.l2Cache) out.l2Cache = reported(v.l2Cache);
  if (v.refcountCache) out.refcountCache = reported(v.refcountCache);
  if (v.combinedCache) out.combinedCache = reported(v.combinedCache);
  if (v.cacheEntrySize) out.cacheEntrySize = reported(v.cacheEntrySize);
  if (v.cleanupInterval) out.cleanupInterval = reported(v.cleanupInterval);
  if (v.extendedL2) out.extendedL2 = reported(v.extendedL2);
  if (v.image) out.image = reported(v.image);
  if (v.requestSize) out.requestSize = reported(v.requestSize);
  if (v.pattern) out.pattern = reported(v.pattern);
  if (v.trace) out.trace = reported(v.trace);
  return out;
}

/** Every value a disk carries, for moving their ranges after an edit. */
export function locatedValues(v: DiskValues): (Located<unknown> | undefined)[] {
  return [v.size, v.clusterSize, v.format, v.l2Cache, v.refcountCache, v.combinedCache, v.cacheEntrySize, v.cleanupInterval, v.extendedL2, v.image, v.requestSize, v.pattern, v.trace];
}

const DISK_VALUE_KEYS = [
  'size', 'clusterSize', 'format', 'l2Cache', 'refcountCache', 'combinedCache', 'cacheEntrySize',
  'cleanupInterval', 'extendedL2', 'image', 'requestSize', 'pattern', 'trace',
] as const satisfies readonly (keyof DiskValues)[];
const everyValueKey: Exclude<keyof DiskValues, (typeof DISK_VALUE_KEYS)[number]> extends never ? true : false = true;
void everyValueKey;

/** Whether a pointer lies within another of the list (or repeats it): then a disk's findings may belong to a disk inside it. */
export function pointersNested(pointers: readonly string[]): boolean {
  const all = new Set(pointers);
  if (all.size < pointers.length) return true;
  for (const pointer of pointers) {
    for (let cut = pointer.lastIndexOf('/'); cut > 0; cut = pointer.lastIndexOf('/', cut - 1)) if (all.has(pointer.slice(0, cut))) return true;
  }
  return false;
}

/** pointerWithin for a non-empty scope, without building `${scope}/`. */
const isWithin = (pointer: string, scope: string): boolean => (pointer.length === scope.length ? pointer === scope : pointer.charCodeAt(scope.length) === 47 && pointer.startsWith(scope));

/**
 * Gives each finding to the disk whose pointer holds it, else its machine, else the file; returns
 * the file's. Found by walking each finding's pointer up to its owner, so the cost grows with the
 * findings, not with findings times disks. `fromDisk` (given only when no disk's pointer lies within
 * another's) names the disk a finding came from: when that disk's pointer holds the finding it is
 * the only one that can, and the walk (a string cut and a lookup per level) is skipped.
 */
function claimFindings(findings: readonly LintFinding[], disks: DiskReport[], machines: MachineReport[], fromDisk?: ReadonlyMap<LintFinding, DiskReport>): number[] {
  const diskAt = new Map<string, number[]>();
  const machineAt = new Map<string, number[]>();
  for (const disk of disks) if (!diskAt.has(disk.pointer)) diskAt.set(disk.pointer, disk.findings);
  for (const machine of machines) if (!machineAt.has(machine.pointer)) machineAt.set(machine.pointer, machine.findings);
  const ownerIn = (owners: Map<string, number[]>, pointer: string): number[] | undefined => {
    for (let at = pointer; ; at = at.slice(0, at.lastIndexOf('/'))) {
      const owner = owners.get(at);
      if (owner) return owner;
      if (at === '') return undefined;
    }
  };
  const file: number[] = [];
  findings.forEach((finding, index) => {
    const disk = fromDisk?.get(finding);
    if (disk && disk.pointer !== '' && isWithin(finding.pointer, disk.pointer)) disk.findings.push(index);
    else (ownerIn(diskAt, finding.pointer) ?? ownerIn(machineAt, finding.pointer) ?? file).push(index);
  });
  return file;
}
