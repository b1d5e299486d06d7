// Re-linting one file as it is edited (the editor's case). An edit inside one disk re-reads and
// re-checks that disk alone and moves everything after it; any other edit, or one the fast path
// cannot prove equivalent, lints the whole file through the same path as a cold lint.
import type { Fix, SourceRange } from '../core/results';
import type { SizeStyle } from '../core/units';
import type { DefinitionDocument } from '../model/document';
import { extractDisk, type DiskSpec, type MachineSpec } from '../model/disks';
import { diffTexts, hasSharedNodes, reparseItem, type TextChange } from '../model/incremental';
import { valueAtPath } from '../model/jsonpath';
import type { LineIndex } from '../model/lines';
import type { Mapping } from '../model/mapping';
import { lintDisk } from './disks';
import { imagePathsOf, prepareDocument } from './documents';
import { traceRequestsOfMachines } from './traces';
import type { TraceRequest } from '../model/traces';
import { lintPreparedUnits } from './lint';
import { FileContext, type LintOptions } from './prepare';
import { assemble, locatedValues, pointersNested, type DiskUnit, type FileReport, type LintFinding, type MachineUnit, type Units } from './report';
import { runMachineRules } from './rules';


/**
 * Moves what lies outside an edit to where it sits after it: offsets after the edit shift by its
 * length, and lines and columns are read again where they may have changed. Everything after the
 * line the edit ends on moves by whole lines, so it keeps its columns and needs no lookup; a range
 * that lies wholly before the edit is returned as it is.
 */
class Shift {
  /** Old offsets at or after this start a line that comes whole after the edit. */
  private readonly wholeLinesFrom: number;
  private readonly lineDelta: number;

  constructor(readonly change: TextChange, oldLines: LineIndex, readonly lines: LineIndex) {
    const next = oldLines.position(change.oldEnd).line + 1;
    if (next > oldLines.lineCount) {
      this.wholeLinesFrom = Infinity;
      this.lineDelta = 0;
    } else {
      this.wholeLinesFrom = oldLines.lineStart(next);
      this.lineDelta = lines.position(this.wholeLinesFrom + change.delta).line - next;
    }
  }

  offset(offset: number): number {
    return offset >= this.change.oldEnd ? offset + this.change.delta : offset;
  }

  /** Whether a range lies wholly before the edit (then it stays as it is). */
  keeps(range: SourceRange): boolean {
    return range.offset + range.length < this.change.oldEnd;
  }

  range(range: SourceRange): SourceRange {
    const { oldEnd, delta } = this.change;
    const end = range.offset + range.length;
    if (end < oldEnd) return range;
    if (range.offset >= this.wholeLinesFrom) {
      const lines = this.lineDelta;
      return { offset: range.offset + delta, length: range.length, line: range.line + lines, column: range.column, endLine: range.endLine + lines, endColumn: range.endColumn };
    }
    const stop = end + delta;
    // Lines move even when the length does not (a line break replaced by a character).
    if (range.offset >= oldEnd) return this.lines.range(range.offset + delta, stop);
    const to = this.lines.position(stop);
    return { ...range, length: stop - range.offset, endLine: to.line, endColumn: to.column };
  }

  private fix(fix: Fix): Fix {
    return fix.edits.some((e) => e.offset >= this.change.oldEnd) ? { ...fix, edits: fix.edits.map((e) => ({ ...e, offset: this.offset(e.offset) })) } : fix;
  }

  /** The finding moved, or the same object when nothing of it lies after the edit. */
  finding(finding: LintFinding): LintFinding {
    const { fix, alternatives, related } = finding;
    const oldEnd = this.change.oldEnd;
    const untouched =
      this.keeps(finding.range) &&
      !(fix && fix.edits.some((e) => e.offset >= oldEnd)) &&
      !(alternatives && alternatives.some((a) => a.edits.some((e) => e.offset >= oldEnd))) &&
      !(related && related.some((r) => r.file === undefined && !this.keeps(r.range)));
    if (untouched) return finding;
    // A plain copy first, then its fields replaced: a spread followed by fields takes the JavaScript engine's slow path.
    const shifted: LintFinding = { ...finding };
    shifted.range = this.range(finding.range);
    if (related) shifted.related = related.map((r) => (r.file === undefined ? { ...r, range: this.range(r.range) } : r));
    if (fix) shifted.fix = this.fix(fix);
    if (alternatives) shifted.alternatives = alternatives.map((a) => this.fix(a));
    return shifted;
  }

  findings(findings: readonly LintFinding[]): LintFinding[] {
    return findings.map((f) => this.finding(f));
  }

  /** Moves a disk's ranges in place (its spec is the session's own). */
  disk(disk: DiskSpec): void {
    disk.range = this.range(disk.range);
    for (const value of locatedValues(disk.values)) if (value) value.range = this.range(value.range);
    const backing = disk.backing;
    if (backing && 'file' in backing) backing.file.range = this.range(backing.file.range);
    if (backing && 'disk' in backing) this.disk(backing.disk);
  }
}

interface SessionState {
  text: string;
  document: DefinitionDocument;
  machines: MachineSpec[];
  units: Units;
  sizeStyle: SizeStyle | undefined;
  /** Anchors or aliases: then every edit is read in full. */
  shared: boolean;
  /** Whether a disk's pointer lies within another's: an edit inside a disk keeps every pointer. */
  disksNested: boolean;
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
      this.state = { text, document, machines: units.machines.map((u) => u.machine), units, sizeStyle: context.fileSizeStyle(this.machines), shared: hasSharedNodes(document), disksNested: pointersNested(units.machines.flatMap((u) => u.disks.map((d) => d.disk.pointer))), report };
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
    const shift = new Shift(change, state.document.lines, document.lines);
    for (const machine of state.machines) {
      machine.range = shift.range(machine.range);
      if (machine.memory) machine.memory.range = shift.range(machine.memory.range);
      if (machine.host) machine.host.range = shift.range(machine.host.range);
      for (const disk of machine.disks) if (disk !== old.disk) shift.disk(disk);
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
      other: shift.findings(state.units.other),
      machines: state.units.machines.map((unit) => {
        const moved: MachineUnit = {
          machine: unit.machine,
          valueFindings: shift.findings(unit.valueFindings),
          ruleFindings: shift.findings(unit.ruleFindings),
          disks: unit.disks.map((d): DiskUnit => {
            if (d === old) return edited;
            if (d.findings.length === 0) return d;
            const moved: DiskUnit = { disk: d.disk, findings: shift.findings(d.findings) };
            if (d.result) moved.result = d.result;
            return moved;
          }),
        };
        // The edited disk's machine sums its disks again.
        if (unit === target.machine) runMachineRules(context, moved);
        return moved;
      }),
    };
    const report = assemble(context, units, state.disksNested);
    this.state = { ...state, text, document, units, report };
    this.lastUpdate = 'incremental';
    return report;
  }
}
