// Preparing a lint: the mapping file read against the rules that exist, and the context one file's
// lint carries (severities after overrides, the image facts, the file's size style, fix helpers).
import type { Fix, Severity } from '../core/results';
import type { SizeStyle } from '../core/units';
import { setDiskFieldEdit, sizeStyleOfMachines } from '../model/disk-edits';
import { isScalar } from '../model/yaml-functions';
import { nodeAt, type DefinitionDocument } from '../model/document';
import type { DiskSpec, MachineSpec } from '../model/disks';
import type { NewValue } from '../model/edits';
import type { ImageLookup } from '../model/images';
import type { TraceLookup } from '../model/traces';
import { parseJsonPointer } from '../model/jsonpath';
import { parseMapping, type Mapping, type MappingLoad } from '../model/mapping';
import { RULE_IDS, type Rule, type RuleId } from '../rules';
import type { FixHelpers, SizeField } from '../rules/types';
import type { LintFinding } from './report';

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
  /** Measured curves of the traces disks name, read by the caller; absent: traces are not used. */
  traces?: TraceLookup;
}

/** Reads a mapping file, checking rule ids against the rules that exist. */
export function loadMapping(text: string, path: string): MappingLoad {
  return parseMapping(text, path, RULE_IDS);
}

/** The scalar a finding points at, as data: part of the finding's identity across runs. */
function scalarAt(document: DefinitionDocument, pointer: string): string | undefined {
  if (pointer === '') return undefined;
  const path = parseJsonPointer(pointer);
  if (!path.ok) return undefined;
  const node = nodeAt(document, path.value.map((p) => (typeof p === 'string' && /^(0|[1-9]\d*)$/.test(p) ? Number(p) : p)))?.node;
  return node && isScalar(node) ? String(node.value) : undefined;
}

/** A finding as a rule hands it over, before its rule id, severity and owner are attached. */
export type FindingBody = Omit<LintFinding, 'rule' | 'severity' | 'machine' | 'disk'>;

/** The disk (with its machine) or the machine whose check made a finding: the finding belongs to it. */
export type FindingOwner = { kind: 'disk'; disk: DiskSpec } | { kind: 'machine'; machine: MachineSpec };

/** What one file's lint carries from rule to rule. Findings go to the list each call names. */
export class FileContext {
  private sizeStyle: { style: SizeStyle | undefined } | undefined;
  private readonly severities: Record<string, Severity | 'off'>;
  readonly images: ImageLookup | undefined;
  readonly traces: TraceLookup | undefined;

  constructor(readonly document: DefinitionDocument, readonly mapping: Mapping, options: LintOptions) {
    this.severities = { ...mapping.severities, ...options.severities };
    this.images = options.images;
    this.traces = options.traces;
  }

  severityOf(rule: Rule<RuleId>): Severity | 'off' {
    return this.severities[rule.id] ?? rule.severity;
  }

  /** Adds a finding at the severity the file asks for; `owner` absent: it belongs to the file. */
  add(into: LintFinding[], rule: Rule<RuleId>, finding: FindingBody, owner?: FindingOwner): void {
    const severity = this.severityOf(rule);
    if (severity === 'off') return;
    const written = scalarAt(this.document, finding.pointer);
    const out: LintFinding = { rule: rule.id, severity, ...finding };
    if (owner?.kind === 'disk') {
      out.machine = owner.disk.machine.name;
      out.disk = owner.disk.name;
    } else if (owner) out.machine = owner.machine.name;
    if (written !== undefined) out.written = written;
    into.push(out);
  }

  /** How the file writes sizes (read once per file: inserted values follow it). */
  fileSizeStyle(machines: readonly MachineSpec[]): SizeStyle | undefined {
    if (!this.sizeStyle) this.sizeStyle = { style: sizeStyleOfMachines(machines) };
    return this.sizeStyle.style;
  }

  fixHelpers(disk: DiskSpec, machines: readonly MachineSpec[]): FixHelpers {
    const set = (field: SizeField | 'cleanupInterval', value: NewValue, title: string): Fix | undefined => {
      const result = setDiskFieldEdit(this.document, this.mapping, disk, field, value, this.fileSizeStyle(machines));
      return result.ok ? { title, edits: [result.value] } : undefined;
    };
    return {
      setSize: (field, bytes, title) => set(field, { kind: 'size', bytes }, title),
      setInterval: (field, seconds, title) => set(field, { kind: 'interval', seconds }, title),
    };
  }
}
