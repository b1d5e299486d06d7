// Re-linting one file as it is edited (the editor's case). An edit inside one disk re-reads and
// re-checks that disk alone and moves everything after it; any other edit, or one the fast path
// cannot prove equivalent, lints the whole file through the same path as a cold lint.
import type { SourceRange } from '../core/results';
import type { SizeStyle } from '../core/units';
import type { DefinitionDocument } from '../model/document';
import { extractDisk, type DiskSpec, type Located, type MachineSpec } from '../model/disks';
import { diffTexts, hasSharedNodes, reparseItem, type TextChange } from '../model/incremental';
import { valueAtPath } from '../model/jsonpath';
import type { Mapping } from '../model/mapping';
import { lintDisk } from './disks';
import { imagePathsOf, prepareDocument } from './documents';
import { traceRequestsOfMachines } from './traces';
import type { TraceRequest } from '../model/traces';
import { lintPreparedUnits } from './lint';
import { FileContext, type LintOptions } from './prepare';
import { assemble, type DiskUnit, type FileReport, type LintFinding, type MachineUnit, type Units } from './report';
import { runMachineRules } from './rules';


function shiftOffset(offset: number, change: TextChange): number {
  return offset >= change.oldEnd ? offset + change.delta : offset;
}

/** Moves a range that lies outside the edited part: offsets after the edit shift, and their lines and columns are read again. */
function shiftRange(range: SourceRange, change: TextChange, lines: DefinitionDocument['lines']): SourceRange {
  const end = range.offset + range.length;
  if (end < change.oldEnd && range.offset < change.oldEnd) return range;
  const stop = end >= change.oldEnd ? end + change.delta : end;
  // Lines move even when the length does not (a line break replaced by a character).
  if (range.offset >= change.oldEnd) return lines.range(range.offset + change.delta, stop);
  const to = lines.position(stop);
  return { ...range, length: stop - range.offset, endLine: to.line, endColumn: to.column };
}

function shiftFinding(finding: LintFinding, change: TextChange, lines: DefinitionDocument['lines']): LintFinding {
  const shifted: LintFinding = { ...finding, range: shiftRange(finding.range, change, lines) };
  if (finding.related) shifted.related = finding.related.map((r) => ({ ...r, range: shiftRange(r.range, change, lines) }));
  if (finding.fix) shifted.fix = { ...finding.fix, edits: finding.fix.edits.map((e) => ({ ...e, offset: shiftOffset(e.offset, change) })) };
  return shifted;
}

function shiftDisk(disk: DiskSpec, change: TextChange, lines: DefinitionDocument['lines']): void {
  disk.range = shiftRange(disk.range, change, lines);
  for (const value of Object.values(disk.values) as (Located<unknown> | undefined)[]) if (value) value.range = shiftRange(value.range, change, lines);
  const backing = disk.backing;
  if (backing && 'file' in backing) backing.file.range = shiftRange(backing.file.range, change, lines);
  if (backing && 'disk' in backing) shiftDisk(backing.disk, change, lines);
}

interface SessionState {
  text: string;
  document: DefinitionDocument;
  machines: MachineSpec[];
  units: Units;
  sizeStyle: SizeStyle | undefined;
  /** Anchors or aliases: then every edit is read in full. */
  shared: boolean;
  report: FileReport;
}

/**
 * Lints one file again and again as it is edited (the editor's case). An edit inside one disk
 * re-reads and re-checks that disk alone and moves everything after it; any other edit, or one the
 * fast path cannot prove equivalent, lints the whole file. The report is always the one
 * lintDocument would give for the same text.
 */
export class LintSession {
  private state: SessionState | undefined;
  /** How the last update was done, for tests and benchmarks. */
  lastUpdate: 'full' | 'incremental' | 'unchanged' = 'full';

  private machines: readonly MachineSpec[] = [];

  constructor(readonly path: string, readonly mapping: Mapping, readonly options: LintOptions = {}) {}

  /** Forget what was read: the next update lints the whole file (after image files changed, say). */
  reset(): void {
    this.state = undefined;
  }

  /** Absolute paths of the image files the last text's disks name. */
  imagePaths(): string[] {
    return imagePathsOf(this.path, this.machines);
  }

  /** The measured curves the last text's disks ask for (traces and geometry). */
  traceRequests(): TraceRequest[] {
    return traceRequestsOfMachines(this.path, this.mapping, this.machines, this.options.images);
  }

  update(text: string): FileReport {
    const previous = this.state;
    if (previous) {
      if (previous.text === text) {
        this.lastUpdate = 'unchanged';
        return previous.report;
      }
      const fast = this.tryIncremental(previous, text);
      if (fast) return fast;
    }
    return this.full(text);
  }

  private full(text: string): FileReport {
    this.lastUpdate = 'full';
    this.state = undefined;
    const prepared = prepareDocument({ path: this.path, text }, this.mapping);
    const { report, linted } = lintPreparedUnits(prepared, this.options);
    const { document } = prepared.read;
    this.machines = prepared.extraction?.machines ?? [];
    const simpleSelectors = (!this.mapping.machines || this.mapping.machines.steps !== undefined) && this.mapping.disks.steps !== undefined;
    if (linted && document && simpleSelectors && document.format === 'yaml') {
      const { context, units } = linted;
      this.state = { text, document, machines: units.machines.map((u) => u.machine), units, sizeStyle: context.fileSizeStyle(this.machines), shared: hasSharedNodes(document), report };
    }
    return report;
  }

  private tryIncremental(state: SessionState, text: string): FileReport | undefined {
    if (state.shared) return undefined;
    const change = diffTexts(state.text, text);
    if (!change) return state.report;
    let target: { machine: MachineUnit; index: number; old: DiskUnit } | undefined;
    for (const machine of state.units.machines) {
      const index = machine.disks.findIndex(({ disk }) => {
        const [start, end] = disk.node.range ?? [0, 0];
        return start < change.start && change.oldEnd <= end;
      });
      const old = machine.disks[index];
      if (old) {
        target = { machine, index, old };
        break;
      }
    }
    if (!target) return undefined;
    const { old } = target;
    const document = reparseItem(state.document, text, change, old.disk.path);
    // From here on the previous tree has changed: any failure must read the whole file.
    if (!document) return this.full(text);
    const { lines } = document;
    for (const machine of state.machines) {
      machine.range = shiftRange(machine.range, change, lines);
      if (machine.memory) machine.memory.range = shiftRange(machine.memory.range, change, lines);
      if (machine.host) machine.host.range = shiftRange(machine.host.range, change, lines);
      for (const disk of machine.disks) if (disk !== old.disk) shiftDisk(disk, change, lines);
    }
    const value = valueAtPath(document.data, old.disk.path);
    const machineSpec = target.machine.machine;
    const extracted = extractDisk(document, this.mapping, machineSpec, old.disk.path, value, old.disk.fallbackName);
    if (!extracted.disk) return this.full(text);
    const position = machineSpec.disks.indexOf(old.disk);
    machineSpec.disks[position] = extracted.disk;

    const context = new FileContext(document, this.mapping, this.options);
    const style = context.fileSizeStyle(state.machines);
    if (JSON.stringify(style) !== JSON.stringify(state.sizeStyle)) return this.full(text);
    // Problems the new disk's values have that belong to one of its scopes.
    const problems = extracted.problems;
    const edited = lintDisk(context, extracted.disk, problems, state.machines);
    const units: Units = {
      other: state.units.other.map((f) => shiftFinding(f, change, lines)),
      machines: state.units.machines.map((unit) => {
        const moved: MachineUnit = {
          machine: unit.machine,
          valueFindings: unit.valueFindings.map((f) => shiftFinding(f, change, lines)),
          ruleFindings: unit.ruleFindings.map((f) => shiftFinding(f, change, lines)),
          disks: unit.disks.map((d): DiskUnit => (d === old ? edited : {
            disk: d.disk,
            findings: d.findings.map((f) => shiftFinding(f, change, lines)),
            ...(d.result ? { result: { sizing: d.result.sizing, report: d.result.report } } : {}),
          })),
        };
        // The edited disk's machine sums its disks again.
        if (unit === target.machine) runMachineRules(context, moved);
        return moved;
      }),
    };
    const report = assemble(context, units);
    this.state = { ...state, text, document, units, report };
    this.lastUpdate = 'incremental';
    return report;
  }
}
