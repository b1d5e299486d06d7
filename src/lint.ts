// The one orchestrator: a definition's text and its mapping in, findings with fixes out. The CLI,
// the editor and the tests all call lintDocument; nothing here reads files or knows a front end.
import { sizeChain, type CacheSettings, type DiskSizing, type LayerCache, type LayerSpec } from './core/cache';
import type { Finding, Fix, RelatedLocation, Severity, SourceRange } from './core/results';
import { DEFAULT_REFCOUNT_BITS } from './core/sizing';
import { nodeAt, readDefinition, type DefinitionDocument } from './model/document';
import type { NewValue } from './model/edits';
import { setDiskFieldEdit, sizeStyleOfMachines } from './model/diskEdits';
import { extractDisk, extractMachines, type DiskSpec, type Extraction, type Located, type MachineSpec, type ValueProblem } from './model/disks';
import { loadMapping as loadMappingFile, type Mapping, type MappingLoad } from './model/mapping';
import { readSuppressions } from './model/suppressions';
import { RULE_IDS, RULES, type Rule } from './rules';
import type { DiskCheck, FindingInput, FixHelpers, SizedDisk, SizeField } from './rules/types';
import { formatSize, type SizeStyle } from './core/units';
import type { ImageChainFacts, ImageLookup } from './model/images';
import * as nodePath from 'node:path';
import { diffTexts, hasSharedNodes, reparseItem, type TextChange } from './model/incremental';
import { parseJsonPointer, valueAtPath } from './model/jsonpath';
import { isScalar } from 'yaml';

export type { Finding, Fix, Severity, SourceRange } from './core/results';
export type { Mapping, MappingProblem } from './model/mapping';
export { RULES, RULE_IDS } from './rules';

export interface SourceFile {
  /** Absolute path of the definition file. */
  path: string;
  text: string;
}

export interface LintOptions {
  /** Severity per rule id, over the mapping file's `rules` (editor settings use this). */
  severities?: Record<string, Severity | 'off'>;
  /** Facts of the image files definitions name, read by the caller; absent: images are not checked. */
  images?: ImageLookup;
}

export interface DiskReport {
  machine: string;
  name: string;
  /** Whether the name comes from the definition (else it is "disk N", which depends on the index). */
  named: boolean;
  pointer: string;
  range: SourceRange;
  sizing: DiskSizing['report'];
  recommended: DiskSizing['recommended'];
  layers: LayerCache[];
  /** What the definition sets, as written (absent: the driver default applies). */
  configured: Partial<Record<SizeField | 'cleanupInterval', { raw: unknown; pointer: string }>>;
  extendedL2: boolean;
  requestSize: bigint;
  pattern: string;
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
  budget?: bigint;
  cacheMemoryTotal: bigint;
  /** Indices into FileReport.disks. */
  disks: number[];
}

export interface FileReport {
  path: string;
  disks: DiskReport[];
  machines: MachineReport[];
  findings: Finding[];
  /** False when the file could not be parsed: --fix must leave it alone. */
  parsed: boolean;
}

/** Reads a mapping file, checking rule ids against the rules that exist. */
export function loadMapping(text: string, path: string): MappingLoad {
  return loadMappingFile(text, path, RULE_IDS);
}

const SEVERITY_ORDER: Record<Severity, number> = { error: 0, warning: 1, info: 2 };
const RULE_ORDER = new Map(RULES.map((rule, index) => [rule.id, index]));

/** The first line of a node: where findings about a whole disk or machine are shown. */
function headRange(document: DefinitionDocument, range: SourceRange): SourceRange {
  const lineText = document.lines.lineText(range.line);
  const end = document.lines.lineStart(range.line) + lineText.replace(/\s+(#.*)?$/, '').length;
  return document.lines.range(range.offset, Math.max(range.offset, Math.min(end, range.offset + range.length)));
}

/** The scalar a finding points at, as data: part of the finding's identity across runs. */
function scalarAt(document: DefinitionDocument, pointer: string): string | undefined {
  if (pointer === '') return undefined;
  const path = parseJsonPointer(pointer);
  if (!path.ok) return undefined;
  const node = nodeAt(document, path.value.map((p) => (typeof p === 'string' && /^(0|[1-9]\d*)$/.test(p) ? Number(p) : p)))?.node;
  return node && isScalar(node) ? String(node.value) : undefined;
}

class FileLint {
  /** Where findings go: the list of the disk, machine or file being checked. */
  sink: Finding[] = [];
  sizeStyle: SizeStyle | undefined;
  private readonly severities: Record<string, Severity | 'off'>;

  readonly images: ImageLookup | undefined;

  constructor(readonly document: DefinitionDocument, readonly mapping: Mapping, options: LintOptions) {
    this.severities = { ...mapping.severities, ...options.severities };
    this.images = options.images;
  }

  severityOf(rule: Rule): Severity | 'off' {
    return this.severities[rule.id] ?? rule.severity;
  }

  add(rule: Rule, finding: Omit<Finding, 'rule' | 'severity'>): void {
    const severity = this.severityOf(rule);
    if (severity === 'off') return;
    const written = scalarAt(this.document, finding.pointer);
    this.sink.push({ rule: rule.id, severity, ...finding, ...(written !== undefined ? { written } : {}) });
  }

  fileSizeStyle(machines: readonly MachineSpec[]): SizeStyle | undefined {
    if (!this.sizeStyle) this.sizeStyle = sizeStyleOfMachines(machines);
    return this.sizeStyle;
  }

  fixHelpers(disk: DiskSpec, style: () => SizeStyle | undefined): FixHelpers {
    const set = (field: SizeField | 'cleanupInterval', value: NewValue, title: string): Fix | undefined => {
      const result = setDiskFieldEdit(this.document, this.mapping, disk, field, value, style());
      return result.ok ? { title, edits: [result.edit] } : undefined;
    };
    return {
      setSize: (field, bytes, title) => set(field, { kind: 'size', bytes }, title),
      setInterval: (field, seconds, title) => set(field, { kind: 'interval', seconds }, title),
    };
  }
}

function settingsOf(disk: DiskSpec): CacheSettings {
  const v = disk.values;
  return {
    l2Cache: v.l2Cache?.value,
    refcountCache: v.refcountCache?.value,
    combinedCache: v.combinedCache?.value,
    entrySize: v.cacheEntrySize?.value,
    cleanupInterval: v.cleanupInterval?.value,
  };
}

/**
 * The layers of a disk: its own, then each backing layer. A backing disk described inline brings
 * its own values; one named only by path is taken to have the overlay's geometry (overlays are
 * usually created at their backing file's size) and the driver's default caches.
 */
function chainOf(disk: DiskSpec, mapping: Mapping, image?: ImageChainFacts): LayerSpec[] | undefined {
  if (image && image.problem?.layer !== 0 && image.layers[0]?.format === 'qcow2') return chainFromImage(disk, image);
  const chain: LayerSpec[] = [];
  let current: DiskSpec | undefined = disk;
  let inherited: bigint | undefined;
  while (current) {
    const size = current.values.size?.value ?? inherited;
    if (size === undefined) return chain.length > 0 ? chain : undefined;
    const geometry = {
      virtualSize: size,
      clusterSize: current.values.clusterSize?.value ?? mapping.assume.clusterSize,
      extendedL2: current.values.extendedL2?.value ?? false,
      refcountBits: mapping.assume.refcountBits ?? DEFAULT_REFCOUNT_BITS,
    };
    chain.push({ geometry, settings: settingsOf(current) });
    inherited = size;
    const backing: DiskSpec['backing'] = current.backing;
    if (backing && 'file' in backing) {
      chain.push({ geometry: { ...geometry }, settings: {} });
      break;
    }
    current = backing?.disk;
  }
  return chain;
}

/** The layers as the files are: each qcow2 layer's own geometry; the definition's settings where it gives them. */
function chainFromImage(disk: DiskSpec, image: ImageChainFacts): LayerSpec[] | undefined {
  const chain: LayerSpec[] = [];
  let described: DiskSpec | undefined = disk;
  for (const [index, layer] of image.layers.entries()) {
    if (image.problem?.layer === index || layer.format !== 'qcow2') break;
    if (layer.virtualSize === undefined || layer.clusterSize === undefined) break;
    chain.push({
      geometry: { virtualSize: layer.virtualSize, clusterSize: layer.clusterSize, extendedL2: layer.extendedL2 ?? false, refcountBits: layer.refcountBits ?? DEFAULT_REFCOUNT_BITS },
      settings: described ? settingsOf(described) : {},
    });
    const backing: DiskSpec['backing'] = described?.backing;
    described = backing && 'disk' in backing ? backing.disk : undefined;
  }
  return chain.length > 0 ? chain : undefined;
}

function lintDisk(lint: FileLint, disk: DiskSpec, machines: readonly MachineSpec[]): { sizing: DiskSizing; report: DiskReport } | undefined {
  const { mapping, document } = lint;
  const invalid = RULES.find((r) => r.id === 'invalid-value') as Rule;
  const written = disk.values.image;
  const imagePath = written ? nodePath.resolve(nodePath.dirname(document.path), written.value) : undefined;
  const facts = imagePath ? lint.images?.(imagePath) : undefined;
  const chain = chainOf(disk, mapping, facts);
  if (!chain) {
    const sizeField = mapping.file.fields.disk.size;
    // A size that is written but unreadable already has its invalid-value finding.
    const sizeChainKeys = mapping.diskFields.size?.memberChain;
    if (sizeChainKeys && nodeAt(document, [...disk.path, ...sizeChainKeys])) return undefined;
    lint.add(invalid, {
      message: sizeField
        ? `disk "${disk.name}" has no virtual size: nothing at ${sizeField}, so its caches cannot be sized`
        : `disk "${disk.name}" cannot be sized: the mapping file has no fields.disk.size selector`,
      pointer: disk.pointer,
      range: headRange(document, disk.range),
    });
    return undefined;
  }
  const sizing = sizeChain(chain, mapping.profile);
  const top = sizing.layers[0] as LayerCache;
  const style = () => lint.fileSizeStyle(machines);
  const fix = lint.fixHelpers(disk, style);
  for (const rule of RULES) {
    if (!rule.checkDisk || lint.severityOf(rule) === 'off') continue;
    const report = (input: FindingInput) => {
      const at = typeof input.at === 'string' ? (disk.values[input.at] as Located<unknown> | undefined) : input.at;
      lint.add(rule, {
        message: input.message,
        pointer: at?.pointer ?? disk.pointer,
        range: at?.range ?? headRange(document, disk.range),
        ...(input.fix ? { fix: input.fix } : {}),
        ...(input.related ? { related: input.related } : {}),
      });
    };
    const check: DiskCheck = {
      disk, sizing, top, mapping, fix, report,
      requestSize: disk.values.requestSize?.value ?? mapping.assume.requestSize,
      pattern: disk.values.pattern?.value ?? mapping.assume.pattern,
      profile: mapping.profile,
      ...(written && imagePath && facts ? { image: { path: imagePath, written, facts, definitionDir: nodePath.dirname(document.path) } } : {}),
    };
    rule.checkDisk(check);
  }
  const configured: DiskReport['configured'] = {};
  for (const key of ['l2Cache', 'refcountCache', 'combinedCache', 'cacheEntrySize', 'cleanupInterval'] as const) {
    const value = disk.values[key];
    if (value) configured[key] = { raw: value.raw, pointer: value.pointer };
  }
  return {
    sizing,
    report: {
      machine: disk.machine.name,
      name: disk.name,
      named: disk.named,
      pointer: disk.pointer,
      range: disk.range,
      sizing: sizing.report,
      recommended: sizing.recommended,
      layers: sizing.layers,
      configured,
      extendedL2: top.geometry.extendedL2,
      requestSize: disk.values.requestSize?.value ?? mapping.assume.requestSize,
      pattern: disk.values.pattern?.value ?? mapping.assume.pattern,
      ...(imagePath
        ? { image: { path: imagePath, read: facts !== undefined && facts.problem?.layer !== 0, layers: (facts?.layers ?? []).map((l) => ({ path: l.path, format: l.format })), ...(facts?.problem ? { problem: facts.problem.message } : {}) } }
        : {}),
    },
  };
}

function applySuppressions(lint: FileLint, machines: readonly MachineSpec[], findings: Finding[]): void {
  const { document, mapping } = lint;
  lint.sink = findings;
  const suppressionRule = RULES.find((r) => r.id === 'invalid-suppression') as Rule;
  const { comments, problems } = readSuppressions(document, new Set(RULE_IDS));
  for (const problem of problems) lint.add(suppressionRule, { message: problem.message, pointer: '', range: problem.range });
  const scopes: { pointer: string; line: number }[] = [];
  for (const machine of machines) {
    if (machine.path.length > 0) scopes.push({ pointer: machine.pointer, line: machine.range.line });
    for (const disk of machine.disks) scopes.push({ pointer: disk.pointer, line: disk.range.line });
  }
  const within = (pointer: string, scope: string) => scope === '' || pointer === scope || pointer.startsWith(`${scope}/`);
  for (const comment of comments) {
    const scope = scopes.filter((s) => s.line === comment.targetLine).sort((a, b) => a.pointer.length - b.pointer.length)[0];
    if (!scope) {
      lint.add(suppressionRule, { message: 'this suppression is not above a disk or machine, so it silences nothing', pointer: '', range: comment.range });
      continue;
    }
    for (const finding of findings) {
      if (!finding.accepted && comment.rules.includes(finding.rule) && within(finding.pointer, scope.pointer)) finding.accepted = { reason: comment.reason };
    }
  }
  for (const entry of mapping.accept) {
    if (entry.file !== undefined && entry.file !== document.path) continue;
    for (const finding of findings) {
      if (!finding.accepted && finding.rule === entry.rule && within(finding.pointer, entry.pointer)) finding.accepted = { reason: entry.reason };
    }
  }
}

function byPlace(a: Finding, b: Finding): number {
  return a.range.offset - b.range.offset || SEVERITY_ORDER[a.severity] - SEVERITY_ORDER[b.severity] || (RULE_ORDER.get(a.rule) ?? 0) - (RULE_ORDER.get(b.rule) ?? 0);
}

/** A definition read and its disks extracted, before any rule runs. */
export interface PreparedDocument {
  file: SourceFile;
  mapping: Mapping;
  read: ReturnType<typeof readDefinition>;
  extraction?: ReturnType<typeof extractMachines>;
  /** Absolute paths of the image files the disks name: what a caller reads before linting. */
  imagePaths: string[];
}

export function prepareDocument(file: SourceFile, mapping: Mapping): PreparedDocument {
  const read = readDefinition(file.path, file.text);
  if (!read.document) return { file, mapping, read, imagePaths: [] };
  const extraction = extractMachines(read.document, mapping);
  const dir = nodePath.dirname(file.path);
  const imagePaths: string[] = [];
  for (const machine of extraction.machines) {
    for (const disk of machine.disks) {
      if (disk.isQcow2 && disk.values.image) imagePaths.push(nodePath.resolve(dir, disk.values.image.value));
    }
  }
  return { file, mapping, read, extraction, imagePaths };
}

/** Lints one definition file. Never throws for any text. */
export function lintDocument(file: SourceFile, mapping: Mapping, options: LintOptions = {}): FileReport {
  return lintPrepared(prepareDocument(file, mapping), options);
}

export function lintPrepared(prepared: PreparedDocument, options: LintOptions = {}): FileReport {
  const { file, mapping, read } = prepared;
  if (!read.document || !prepared.extraction) return unparsedReport(file.path, read.problems);
  const lint = new FileLint(read.document, mapping, options);
  const units = lintUnits(lint, prepared.extraction);
  return assemble(lint, units);
}

function unparsedReport(path: string, problems: readonly { message: string; range: SourceRange }[]): FileReport {
  const rule = RULES.find((r) => r.id === 'parse-error') as Rule;
  return {
    path,
    disks: [],
    machines: [],
    findings: problems.map((p) => ({ rule: rule.id, severity: 'error' as const, message: p.message, pointer: '', range: p.range })),
    parsed: false,
  };
}

/**
 * A definition file above the size limit, left unread: one parse-error finding at its start that
 * names its size and the limit; `raise` says how to change the limit in the front end at hand.
 */
export function oversizedFileReport(path: string, size: bigint, limit: bigint, raise: string): FileReport {
  const at: SourceRange = { offset: 0, length: 0, line: 1, column: 1, endLine: 1, endColumn: 1 };
  const message = `${nodePath.basename(path)} is ${formatSize(size)} (${size} bytes), above the size limit of ${formatSize(limit)} for definition files, so it is not linted; ${raise}`;
  return unparsedReport(path, [{ message, range: at }]);
}

/** The findings of one disk (its values and its rules) and its sizing, kept apart so an edit inside it re-checks it alone. */
interface DiskUnit {
  disk: DiskSpec;
  findings: Finding[];
  result?: { sizing: DiskSizing; report: DiskReport };
}

interface MachineUnit {
  machine: MachineSpec;
  disks: DiskUnit[];
  /** Problems with the machine's own values. */
  valueFindings: Finding[];
  ruleFindings: Finding[];
}

interface Units {
  machines: MachineUnit[];
  /** Value problems that belong to no disk or machine. */
  other: Finding[];
}

const INVALID_VALUE = RULES.find((r) => r.id === 'invalid-value') as Rule;

function problemFindings(lint: FileLint, problems: readonly ValueProblem[], into: Finding[]): void {
  lint.sink = into;
  for (const problem of problems) lint.add(INVALID_VALUE, { message: `${problem.field}: ${problem.message}`, pointer: problem.pointer, range: problem.range });
}

function lintDiskUnit(lint: FileLint, disk: DiskSpec, problems: readonly ValueProblem[], machines: readonly MachineSpec[]): DiskUnit {
  const unit: DiskUnit = { disk, findings: [] };
  problemFindings(lint, problems, unit.findings);
  lint.sink = unit.findings;
  if (disk.isQcow2) unit.result = lintDisk(lint, disk, machines);
  return unit;
}

function machineRuleFindings(lint: FileLint, unit: MachineUnit): void {
  const { machine } = unit;
  const sized: SizedDisk[] = unit.disks.flatMap((d) => (d.result ? [{ disk: d.disk, sizing: d.result.sizing }] : []));
  unit.ruleFindings = [];
  lint.sink = unit.ruleFindings;
  for (const rule of RULES) {
    if (!rule.checkMachine || lint.severityOf(rule) === 'off') continue;
    rule.checkMachine({
      machine, disks: sized, mapping: lint.mapping,
      report: (input) => {
        const at = typeof input.at === 'object' ? input.at : undefined;
        lint.add(rule, {
          message: input.message,
          pointer: at?.pointer ?? machine.pointer,
          range: at?.range ?? headRange(lint.document, machine.range),
          ...(input.related ? { related: input.related as RelatedLocation[] } : {}),
        });
      },
    });
  }
}

const withinPointer = (pointer: string, scope: string) => pointer === scope || pointer.startsWith(`${scope}/`);

function lintUnits(lint: FileLint, extraction: Extraction): Units {
  const { machines, problems } = extraction;
  // Each value problem belongs to the innermost disk or machine whose pointer holds it.
  const owners = new Map<string, ValueProblem[]>();
  const other: ValueProblem[] = [];
  const scopes = new Set<string>();
  for (const machine of machines) {
    scopes.add(machine.pointer);
    for (const disk of machine.disks) scopes.add(disk.pointer);
  }
  for (const problem of problems) {
    let pointer = problem.pointer;
    for (;;) {
      if (scopes.has(pointer)) break;
      const cut = pointer.lastIndexOf('/');
      if (cut < 0) break;
      pointer = pointer.slice(0, cut);
    }
    if (scopes.has(pointer)) owners.set(pointer, [...(owners.get(pointer) ?? []), problem]);
    else other.push(problem);
  }
  const units: Units = { machines: [], other: [] };
  for (const machine of machines) {
    const unit: MachineUnit = { machine, disks: [], valueFindings: [], ruleFindings: [] };
    problemFindings(lint, machine.disks.some((d) => d.pointer === machine.pointer) ? [] : owners.get(machine.pointer) ?? [], unit.valueFindings);
    for (const disk of machine.disks) unit.disks.push(lintDiskUnit(lint, disk, owners.get(disk.pointer) ?? [], machines));
    machineRuleFindings(lint, unit);
    units.machines.push(unit);
  }
  problemFindings(lint, other, units.other);
  return units;
}

function assemble(lint: FileLint, units: Units): FileReport {
  const { mapping, document } = lint;
  const disks: DiskReport[] = [];
  const machineReports: MachineReport[] = [];
  const findings: Finding[] = [...units.other];
  for (const unit of units.machines) {
    const indices: number[] = [];
    findings.push(...unit.valueFindings);
    let total = 0n;
    for (const disk of unit.disks) {
      findings.push(...disk.findings);
      if (!disk.result) continue;
      indices.push(disks.length);
      disks.push(disk.result.report);
      total += disk.result.sizing.report.cacheMemoryTotal;
    }
    findings.push(...unit.ruleFindings);
    const { machine } = unit;
    const memory = machine.memory?.value;
    machineReports.push({
      name: machine.name,
      named: machine.named,
      pointer: machine.pointer,
      range: machine.range,
      memory,
      budget: memory === undefined ? undefined : (memory * BigInt(Math.round(mapping.cacheShareOfMemory * 1_000_000))) / 1_000_000n,
      cacheMemoryTotal: total,
      disks: indices,
    });
  }
  for (const finding of findings) delete finding.accepted;
  applySuppressions(lint, units.machines.map((u) => u.machine), findings);
  findings.sort(byPlace);
  return { path: document.path, disks, machines: machineReports, findings, parsed: true };
}

// ---- re-linting one file as it is edited ----

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

function shiftFinding(finding: Finding, change: TextChange, lines: DefinitionDocument['lines']): Finding {
  const shifted: Finding = { ...finding, range: shiftRange(finding.range, change, lines) };
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
    const dir = nodePath.dirname(this.path);
    return this.machines.flatMap((m) => m.disks.flatMap((d) => (d.isQcow2 && d.values.image ? [nodePath.resolve(dir, d.values.image.value)] : [])));
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
    const file = { path: this.path, text };
    const read = readDefinition(file.path, text);
    this.state = undefined;
    this.machines = [];
    if (!read.document) return unparsedReport(file.path, read.problems);
    const prepared: PreparedDocument = { file, mapping: this.mapping, read, extraction: extractMachines(read.document, this.mapping), imagePaths: [] };
    this.machines = (prepared.extraction as Extraction).machines;
    const lint = new FileLint(read.document, this.mapping, this.options);
    const units = lintUnits(lint, prepared.extraction as Extraction);
    const report = assemble(lint, units);
    const simpleSelectors = (!this.mapping.machines || this.mapping.machines.steps !== undefined) && this.mapping.disks.steps !== undefined;
    if (simpleSelectors && read.document.format === 'yaml') {
      this.state = { text, document: read.document, machines: (prepared.extraction as Extraction).machines, units, sizeStyle: lint.fileSizeStyle((prepared.extraction as Extraction).machines), shared: hasSharedNodes(read.document), report };
    }
    return report;
  }

  private tryIncremental(state: SessionState, text: string): FileReport | undefined {
    if (state.shared) return undefined;
    const change = diffTexts(state.text, text);
    if (!change) return state.report;
    let target: { machine: MachineUnit; index: number } | undefined;
    for (const machine of state.units.machines) {
      const index = machine.disks.findIndex(({ disk }) => {
        const [start, end] = disk.node.range ?? [0, 0];
        return start < change.start && change.oldEnd <= end;
      });
      if (index !== -1) {
        target = { machine, index };
        break;
      }
    }
    if (!target) return undefined;
    const old = target.machine.disks[target.index] as DiskUnit;
    const document = reparseItem(state.document, text, change, old.disk.path);
    // From here on the previous tree has changed: any failure must read the whole file.
    if (!document) return this.full(text);
    const { lines } = document;
    for (const machine of state.machines) {
      machine.range = shiftRange(machine.range, change, lines);
      if (machine.memory) machine.memory.range = shiftRange(machine.memory.range, change, lines);
      for (const disk of machine.disks) if (disk !== old.disk) shiftDisk(disk, change, lines);
    }
    const value = valueAtPath(document.data, old.disk.path);
    const machineSpec = target.machine.machine;
    const extracted = extractDisk(document, this.mapping, machineSpec, old.disk.path, value, old.disk.fallbackName);
    if (!extracted.disk) return this.full(text);
    const position = machineSpec.disks.indexOf(old.disk);
    machineSpec.disks[position] = extracted.disk;

    const lint = new FileLint(document, this.mapping, this.options);
    const style = lint.fileSizeStyle(state.machines);
    if (JSON.stringify(style) !== JSON.stringify(state.sizeStyle)) return this.full(text);
    // Problems the new disk's values have that belong to one of its scopes.
    const problems = extracted.problems;
    const units: Units = {
      other: state.units.other.map((f) => shiftFinding(f, change, lines)),
      machines: state.units.machines.map((unit) => ({
        machine: unit.machine,
        valueFindings: unit.valueFindings.map((f) => shiftFinding(f, change, lines)),
        ruleFindings: unit.ruleFindings,
        disks: unit.disks.map((d) => (d === old ? d : {
          disk: d.disk,
          findings: d.findings.map((f) => shiftFinding(f, change, lines)),
          result: d.result ? { sizing: d.result.sizing, report: { ...d.result.report, range: d.disk.range } } : undefined,
        })),
      })),
    };
    const unit = units.machines[state.units.machines.indexOf(target.machine)] as MachineUnit;
    unit.disks[target.index] = lintDiskUnit(lint, extracted.disk, problems, state.machines);
    for (const other of units.machines) {
      if (other === unit) machineRuleFindings(lint, other);
      else other.ruleFindings = other.ruleFindings.map((f) => shiftFinding(f, change, lines));
    }
    const report = assemble(lint, units);
    this.state = { ...state, text, document, units, report };
    this.lastUpdate = 'incremental';
    return report;
  }
}
