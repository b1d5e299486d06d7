// The cross-file step: after every definition is linted on its own, the rules that look at the
// whole fleet run once per hypervisor host over the machines of all files. Their findings go to
// the file of the first machine placed on the host (files in path order), where the mapping
// file's accept list can accept them like any other.
import { hostLoadOf, type HostLoad } from '../core/host-load';
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

function placedMachines(files: readonly Pick<WorkspaceFile, 'path' | 'machines'>[]): Map<string, PlacedMachine[]> {
  const byHost = new Map<string, PlacedMachine[]>();
  const ordered = [...files].sort((a, b) => (a.path < b.path ? -1 : a.path > b.path ? 1 : 0));
  for (const file of ordered) {
    for (const machine of file.machines) {
      if (machine.host === undefined || machine.hostPointer === undefined || machine.hostRange === undefined) continue;
      const placed: PlacedMachine = {
        file: file.path,
        name: machine.name,
        pointer: machine.pointer,
        range: machine.range,
        host: { name: machine.host, pointer: machine.hostPointer, range: machine.hostRange },
        ...(machine.memory !== undefined ? { memory: machine.memory } : {}),
        cacheMemoryTotal: machine.cacheMemoryTotal,
      };
      byHost.set(machine.host, [...(byHost.get(machine.host) ?? []), placed]);
    }
  }
  return byHost;
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

/** Every host the files place machines on, sorted by name: the numbers the host rule judges. */
export function hostReports(files: readonly Pick<WorkspaceFile, 'path' | 'machines'>[], mapping: Pick<Mapping, 'hosts'>): HostReport[] {
  return [...placedMachines(files)]
    .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0))
    .map(([name, machines]) => {
      const budget = hostBudget(mapping.hosts, name);
      return { name, ...(budget ? { budget } : {}), machines, load: hostLoadOf(machines, budget) };
    });
}

/** The severity the file or settings ask for ('off' rules never run, so it is left out). */
const chosenSeverity = (setting: Severity | 'off' | undefined): Severity | undefined => (setting === 'off' ? undefined : setting);

/** Runs every host rule over the files linted together; adds their findings to the files. */
export function lintHosts(files: readonly WorkspaceFile[], mapping: Mapping, options: HostLintOptions = {}): void {
  const severities = { ...mapping.severities, ...options.severities };
  const filesByPath = new Map(files.map((f) => [f.path, f]));
  const hostRules = RULES.filter((rule) => rule.checkHost && severities[rule.id] !== 'off');
  if (hostRules.length === 0) return;
  for (const [host, machines] of placedMachines(files)) {
    const first = machines[0];
    const file = first && filesByPath.get(first.file);
    if (!first || !file) continue; // placedMachines lists a host only with a machine of these files
    const budget = hostBudget(mapping.hosts, host);
    for (const rule of hostRules) {
      rule.checkHost?.({
        host,
        ...(budget ? { budget } : {}),
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
          file.findings.push(finding);
          file.findings.sort((a, b) => a.range.offset - b.range.offset);
        },
      });
    }
  }
}
