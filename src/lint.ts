// The one orchestrator: a definition's text and its mapping in, findings with fixes out. The CLI,
// the editor and the tests all call lintDocument; nothing here reads files or knows a front end.
import { sizeChain, type CacheSettings, type DiskSizing, type LayerCache, type LayerSpec } from './core/cache';
import type { Finding, Fix, RelatedLocation, Severity, SourceRange } from './core/results';
import { DEFAULT_REFCOUNT_BITS } from './core/sizing';
import { nodeAt, readDefinition, type DefinitionDocument } from './model/document';
import { documentSizeStyle, insertFieldEdit, replaceValueEdit, type NewValue } from './model/edits';
import { extractMachines, type DiskSpec, type Located, type MachineSpec } from './model/disks';
import { loadMapping as loadMappingFile, type Mapping, type MappingLoad } from './model/mapping';
import { readSuppressions } from './model/suppressions';
import { RULE_IDS, RULES, type Rule } from './rules';
import type { DiskCheck, FindingInput, FixHelpers, SizedDisk, SizeField } from './rules/types';
import type { SizeStyle } from './core/units';
import type { ImageChainFacts, ImageLookup } from './model/images';
import * as nodePath from 'node:path';

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

class FileLint {
  readonly findings: Finding[] = [];
  private sizeStyle: SizeStyle | undefined;
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
    this.findings.push({ rule: rule.id, severity, ...finding });
  }

  fileSizeStyle(machines: readonly MachineSpec[]): SizeStyle | undefined {
    if (this.sizeStyle) return this.sizeStyle;
    const raws: unknown[] = [];
    for (const machine of machines) {
      for (const disk of machine.disks) {
        for (const key of ['l2Cache', 'refcountCache', 'totalCache', 'size', 'clusterSize'] as const) {
          const value = disk.values[key];
          if (value) raws.push(value.raw);
        }
      }
    }
    this.sizeStyle = documentSizeStyle(raws);
    return this.sizeStyle;
  }

  fixHelpers(disk: DiskSpec, style: () => SizeStyle | undefined): FixHelpers {
    const set = (field: SizeField | 'cleanupInterval', value: NewValue, title: string): Fix | undefined => {
      const existing = disk.values[field] as Located<unknown> | undefined;
      if (existing) {
        if (existing.viaAlias) return undefined;
        const edit = replaceValueEdit(this.document, existing.node, existing.raw, value, style());
        return edit ? { title, edits: [edit] } : undefined;
      }
      const chain = this.mapping.diskFields[field]?.memberChain;
      if (!chain || chain.length === 0) return undefined;
      // Written but unreadable: invalid-value reports it; inserting would duplicate the key.
      if (nodeAt(this.document, [...disk.path, ...chain])) return undefined;
      const base = nodeAt(this.document, disk.path);
      if (!base || base.viaAlias) return undefined;
      const edit = insertFieldEdit(this.document, base.node, chain, value, style());
      return edit ? { title, edits: [edit] } : undefined;
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
    totalCache: v.totalCache?.value,
    entrySize: v.l2Slice?.value,
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
  for (const key of ['l2Cache', 'refcountCache', 'totalCache', 'l2Slice', 'cleanupInterval'] as const) {
    const value = disk.values[key];
    if (value) configured[key] = { raw: value.raw, pointer: value.pointer };
  }
  return {
    sizing,
    report: {
      machine: disk.machine.name,
      name: disk.name,
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

function applySuppressions(lint: FileLint, machines: readonly MachineSpec[]): void {
  const { document, mapping, findings } = lint;
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
      if (!finding.suppressed && comment.rules.includes(finding.rule) && within(finding.pointer, scope.pointer)) finding.suppressed = { reason: comment.reason };
    }
  }
  for (const entry of mapping.ignore) {
    if (entry.file !== undefined && entry.file !== document.path) continue;
    for (const finding of findings) {
      if (!finding.suppressed && finding.rule === entry.rule && within(finding.pointer, entry.pointer)) finding.suppressed = { reason: entry.reason };
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
  if (!read.document || !prepared.extraction) {
    const rule = RULES.find((r) => r.id === 'parse-error') as Rule;
    return {
      path: file.path,
      disks: [],
      machines: [],
      findings: read.problems.map((p) => ({ rule: rule.id, severity: 'error' as const, message: p.message, pointer: '', range: p.range })),
      parsed: false,
    };
  }
  const document = read.document;
  const lint = new FileLint(document, mapping, options);
  const { machines, problems } = prepared.extraction;
  const invalid = RULES.find((r) => r.id === 'invalid-value') as Rule;
  for (const problem of problems) lint.add(invalid, { message: `${problem.field}: ${problem.message}`, pointer: problem.pointer, range: problem.range });

  const disks: DiskReport[] = [];
  const machineReports: MachineReport[] = [];
  for (const machine of machines) {
    const sized: SizedDisk[] = [];
    const indices: number[] = [];
    for (const disk of machine.disks) {
      if (!disk.isQcow2) continue;
      const result = lintDisk(lint, disk, machines);
      if (!result) continue;
      sized.push({ disk, sizing: result.sizing });
      indices.push(disks.length);
      disks.push(result.report);
    }
    for (const rule of RULES) {
      if (!rule.checkMachine || lint.severityOf(rule) === 'off') continue;
      rule.checkMachine({
        machine, disks: sized, mapping,
        report: (input) => {
          const at = typeof input.at === 'object' ? input.at : undefined;
          lint.add(rule, {
            message: input.message,
            pointer: at?.pointer ?? machine.pointer,
            range: at?.range ?? headRange(document, machine.range),
            ...(input.related ? { related: input.related as RelatedLocation[] } : {}),
          });
        },
      });
    }
    const memory = machine.memory?.value;
    machineReports.push({
      name: machine.name,
      pointer: machine.pointer,
      range: machine.range,
      memory,
      budget: memory === undefined ? undefined : (memory * BigInt(Math.round(mapping.cacheShareOfMemory * 1_000_000))) / 1_000_000n,
      cacheMemoryTotal: sized.reduce((sum, d) => sum + d.sizing.report.cacheMemoryTotal, 0n),
      disks: indices,
    });
  }
  applySuppressions(lint, machines);
  lint.findings.sort(byPlace);
  return { path: file.path, disks, machines: machineReports, findings: lint.findings, parsed: true };
}
