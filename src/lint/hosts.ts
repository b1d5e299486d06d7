// The cross-file step: after every definition is linted on its own, the rules that look at the
// whole fleet run once per hypervisor host over the machines of all files. Their findings go to
// the file of the first machine placed on the host (files in path order), where the mapping
// file's accept list can accept them like any other.
import { hostLoadOf, type HostLoad } from '../core/host-load';
import { sameData, sameItems } from '../core/same-data';
import { hostBudget, type HostBudget, type Mapping } from '../model/mapping';
import { pointerWithin } from '../model/jsonpath';
import { RULES } from '../rules';
import type { PlacedMachine } from '../rules/types';
import type { Severity } from '../core/results';
import type { LintFinding, MachineReport } from './report';
import { sayFinding } from '../rules/wording';

/** What the step reads of one linted file, and where it adds findings. */
export interface WorkspaceFile {
  /** Absolute path. */
  path: string;
  machines: readonly Pick<MachineReport, 'name' | 'pointer' | 'range' | 'memory' | 'host' | 'hostPointer' | 'hostRange' | 'cacheMemoryTotal' | 'hostAcceptances'>[];
  /** The file's findings: the step appends to this list in place. */
  findings: LintFinding[];
}

export interface HostLintOptions {
  severities?: Record<string, Severity | 'off'>;
}

type PlacedSource = { file: string; machine: WorkspaceFile['machines'][number] };

/** The machine reports placed on each host, files in path order: what a host's results are computed from. */
function machinesByHost(files: readonly Pick<WorkspaceFile, 'path' | 'machines'>[]): Map<string, PlacedSource[]> {
  const byHost = new Map<string, PlacedSource[]>();
  const ordered = [...files].sort((a, b) => (a.path < b.path ? -1 : a.path > b.path ? 1 : 0));
  for (const file of ordered) {
    for (const machine of file.machines) {
      if (machine.host === undefined || machine.hostPointer === undefined || machine.hostRange === undefined) continue;
      // Appended in place: this runs for every machine of the workspace after each lint in the
      // editor (test/bench/host-pass.ts).
      const onHost = byHost.get(machine.host);
      if (onHost) onHost.push({ file: file.path, machine });
      else byHost.set(machine.host, [{ file: file.path, machine }]);
    }
  }
  return byHost;
}

function toPlacedMachine({ file, machine }: PlacedSource): PlacedMachine {
  const { name, pointer, range, memory, cacheMemoryTotal } = machine;
  // machinesByHost keeps only machines placed on a host.
  const host = { name: machine.host ?? '', pointer: machine.hostPointer ?? '', range: machine.hostRange ?? range };
  return memory !== undefined
    ? { file, name, pointer, range, host, memory, cacheMemoryTotal }
    : { file, name, pointer, range, host, cacheMemoryTotal };
}

/** One host of the fleet: its budget from the mapping, the machines placed on it and what they ask of it. */
export interface HostReport {
  name: string;
  /** Absent when the mapping knows no memory for the host. */
  budget?: HostBudget;
  /** In the order of the files (sorted by path), then of the machines in each. */
  machines: PlacedMachine[];
  load: HostLoad;
}

const byName = <T>([a]: [string, T], [b]: [string, T]): number => (a < b ? -1 : a > b ? 1 : 0);

function hostReportOf(name: string, machines: PlacedMachine[], mapping: Pick<Mapping, 'hosts'>): HostReport {
  const budget = hostBudget(mapping.hosts, name);
  return budget ? { name, budget, machines, load: hostLoadOf(machines, budget) } : { name, machines, load: hostLoadOf(machines, budget) };
}

/** Every host the files place machines on, sorted by name: the numbers the host rule judges. */
export function hostReports(files: readonly Pick<WorkspaceFile, 'path' | 'machines'>[], mapping: Pick<Mapping, 'hosts'>): HostReport[] {
  return [...machinesByHost(files)].sort(byName).map(([name, sources]) => hostReportOf(name, sources.map(toPlacedMachine), mapping));
}

/** The severity the file or settings ask for ('off' rules never run, so it is left out). */
const chosenSeverity = (setting: Severity | 'off' | undefined): Severity | undefined => (setting === 'off' ? undefined : setting);

/** What one pass gave for a host: its report and findings, and the machine reports they came from. */
interface HostResult {
  sources: readonly PlacedSource['machine'][];
  report: HostReport;
  /** The host's findings, all in the file of the first machine placed there. */
  findings: LintFinding[];
  file: string;
}

/**
 * The host step's results from the last pass over one workspace. The editor runs the step after
 * every lint, over every file's latest report; a file not linted again keeps its machine reports
 * (the very same objects), so a host whose machines are all the same objects, in the same order,
 * gives what it gave before and is not judged again.
 */
export class HostPassMemo {
  private inputs: { mapping: Mapping; severities: string } | undefined;
  private results = new Map<string, HostResult>();

  /**
   * The last pass's results, if it ran with this mapping and these severities; `reset` when they
   * were dropped (another mapping or severities), which is a change even if no host is left.
   */
  previous(mapping: Mapping, severities: string): { results: ReadonlyMap<string, HostResult>; reset: boolean } {
    const reset = this.inputs !== undefined && (this.inputs.mapping !== mapping || this.inputs.severities !== severities);
    if (reset) this.results = new Map();
    this.inputs = { mapping, severities };
    return { results: this.results, reset };
  }

  keep(results: Map<string, HostResult>): void {
    this.results = results;
  }
}

export interface HostPass {
  /** Every host, sorted by name (as hostReports gives them). */
  reports: HostReport[];
  /** Whether any host was judged again or went away since the memo's last pass (always true without a memo). */
  changed: boolean;
}

/** The same report and findings, to the last range and byte. */
const sameOutcome = (a: HostResult, b: HostResult): boolean => a.file === b.file && sameData(a.report, b.report) && sameData(a.findings, b.findings);

/**
 * Runs every host rule over the files linted together and adds their findings to the files; returns
 * the host reports. With a memo, a host whose machines did not change keeps its earlier results
 * (the same finding objects), so a caller can tell what changed by identity.
 */
export function runHostPass(files: readonly WorkspaceFile[], mapping: Mapping, options: HostLintOptions = {}, memo?: HostPassMemo): HostPass {
  const severities = { ...mapping.severities, ...options.severities };
  const remembered = memo?.previous(mapping, JSON.stringify(severities));
  const previous = remembered?.results ?? new Map<string, HostResult>();
  const filesByPath = new Map(files.map((f) => [f.path, f]));
  const hostRules = RULES.filter((rule) => rule.checkHost && severities[rule.id] !== 'off');
  const results = new Map<string, HostResult>();
  const touched = new Set<WorkspaceFile>();
  let changed = remembered === undefined || remembered.reset;
  for (const [host, placedSources] of [...machinesByHost(files)].sort(byName)) {
    const sources = placedSources.map((p) => p.machine);
    const before = previous.get(host);
    let result: HostResult;
    if (before && sameItems(before.sources, sources)) result = before;
    else {
      const judged = judgeHost(host, placedSources, sources, hostRules, severities, mapping, filesByPath);
      // Judged again with the same outcome (the file was linted again, nothing the host rules read
      // moved): the earlier objects stay, so a caller sees no change.
      result = before && sameOutcome(before, judged) ? { ...before, sources } : judged;
    }
    if (result.report !== before?.report || result.findings !== before.findings) changed = true;
    results.set(host, result);
    const file = filesByPath.get(result.file);
    if (file && result.findings.length > 0) {
      file.findings.push(...result.findings);
      touched.add(file);
    }
  }
  if (previous.size !== results.size) changed = true;
  for (const file of touched) file.findings.sort((a, b) => a.range.offset - b.range.offset);
  memo?.keep(results);
  return { reports: [...results.values()].map((r) => r.report), changed };
}

/** Runs every host rule over the files linted together; adds their findings to the files. */
export function lintHosts(files: readonly WorkspaceFile[], mapping: Mapping, options: HostLintOptions = {}): void {
  runHostPass(files, mapping, options);
}

/** The host rules over the machines placed on one host. */
function judgeHost(host: string, placedSources: readonly PlacedSource[], sources: HostResult['sources'], hostRules: typeof RULES, severities: Record<string, Severity | 'off' | undefined>, mapping: Mapping, filesByPath: ReadonlyMap<string, WorkspaceFile>): HostResult {
  const machines = placedSources.map(toPlacedMachine);
  const report = hostReportOf(host, machines, mapping);
  const findings: LintFinding[] = [];
  const first = machines[0];
  const file = first && filesByPath.get(first.file);
  if (!first || !file) return { sources, report, findings, file: '' }; // machinesByHost lists a host only with a machine of these files
  for (const rule of hostRules) {
    rule.checkHost?.({
      host,
      ...(report.budget ? { budget: report.budget } : {}),
      machines,
      report: (input) => {
        const { severity, related } = input;
        const finding: LintFinding = {
          rule: rule.id,
          severity: chosenSeverity(severities[rule.id]) ?? severity,
          message: sayFinding(rule.wording, input),
          pointer: first.host.pointer,
          range: first.host.range,
          related: related.map((r) => (r.file === first.file ? { message: r.message, pointer: r.pointer, range: r.range } : r)),
          host,
          written: host,
        };
        // An accept comment on the first machine or its host line, else the mapping file's list.
        const comment = file.machines.find((m) => m.hostPointer === first.host.pointer)?.hostAcceptances?.find((a) => a.rules.includes(rule.id));
        if (comment) finding.accepted = { reason: comment.reason, from: 'comment' };
        const accepted = mapping.accept.find((entry) => entry.rule === rule.id && (entry.file === undefined || entry.file === first.file) && pointerWithin(finding.pointer, entry.pointer));
        if (accepted && !finding.accepted) finding.accepted = { reason: accepted.reason, from: 'mapping' };
        findings.push(finding);
      },
    });
  }
  return { sources, report, findings, file: first.file };
}
