// From a parsed definition and its mapping to typed machines and disks: every value keeps where it
// sits (JSON Pointer and range), so findings and fixes can point at it. Values that cannot be read
// become problems here; rules only ever see well-typed values.
import type { Node } from 'yaml';
import type { SourceRange } from '../core/results';
import { checkClusterSize, checkExtendedL2, checkSlice } from '../core/sizing';
import { parseInterval, parseSize } from '../core/units';
import { accessOfPattern, PATTERN_HELP } from '../core/workload';
import { nodeAt, nodeBelow, rangeOfNode, type DefinitionDocument, type LocatedNode } from './document';
import { select, toJsonPointer, type PathSegment, type Selector } from './jsonpath';
import type { AccessPatternText, Mapping } from './mapping';
import type { DiskField } from './mapping-schema';

export interface Located<T> {
  value: T;
  /** The value as written (a number, or the string with its unit). */
  raw: unknown;
  path: PathSegment[];
  pointer: string;
  range: SourceRange;
  node: Node;
  /** Reached through a YAML alias: a fix here would change every user of the anchor. */
  viaAlias: boolean;
}

export interface ValueProblem {
  field: string;
  message: string;
  pointer: string;
  range: SourceRange;
}

export interface DiskValues {
  size?: Located<bigint>;
  clusterSize?: Located<bigint>;
  format?: Located<string>;
  l2Cache?: Located<bigint>;
  refcountCache?: Located<bigint>;
  combinedCache?: Located<bigint>;
  cacheEntrySize?: Located<bigint>;
  cleanupInterval?: Located<number>;
  extendedL2?: Located<boolean>;
  image?: Located<string>;
  requestSize?: Located<bigint>;
  pattern?: Located<AccessPatternText>;
  /** Trace file paths as written (one, or a list read in order), relative to the definition file. */
  trace?: Located<string[]>;
}

export interface DiskSpec {
  name: string;
  machine: MachineSpec;
  path: PathSegment[];
  pointer: string;
  range: SourceRange;
  node: Node;
  values: DiskValues;
  /** A backing layer described inline in the definition, or named by path. */
  backing?: { disk: DiskSpec } | { file: Located<string> };
  /** Whether the disk is qcow2 (only those are sized). */
  isQcow2: boolean;
  /** The name used when the definition gives none ("disk 2"). */
  fallbackName: string;
  /** Whether the name comes from the definition (else it is the fallback, which depends on the disk's index). */
  named: boolean;
}

export interface MachineSpec {
  name: string;
  path: PathSegment[];
  pointer: string;
  range: SourceRange;
  node?: Node;
  memory?: Located<bigint>;
  /** The hypervisor host the machine runs on. */
  host?: Located<string>;
  disks: DiskSpec[];
  /** Whether the name comes from the definition or the file (else it depends on the machine's index). */
  named: boolean;
}

export interface Extraction {
  machines: MachineSpec[];
  problems: ValueProblem[];
}

const isRecord = (value: unknown): value is Record<string, unknown> => typeof value === 'object' && value !== null && !Array.isArray(value);

const BOOLEAN_WORDS: Record<string, boolean> = { true: true, false: false, on: true, off: false, yes: true, no: false };

/** A machine or disk whose fields are being read: its place, found once, and its value. */
interface Base {
  path: PathSegment[];
  pointer: string;
  value: unknown;
  found: LocatedNode | undefined;
}

class Extractor {
  readonly problems: ValueProblem[] = [];
  constructor(readonly document: DefinitionDocument, readonly mapping: Mapping) {}

  private base(path: PathSegment[], value: unknown): Base {
    return { path, pointer: toJsonPointer(path), value, found: nodeAt(this.document, path) };
  }

  /** The first node a field's selector picks below `base`, found from the base's own node. */
  private raw(selector: Selector | undefined, base: Base): Located<unknown> | undefined {
    if (!selector || !base.found) return undefined;
    const match = select(selector, base.value)[0];
    if (!match || match.value === null || match.value === undefined) return undefined;
    const found = nodeBelow(this.document, base.found, match.path);
    if (!found) return undefined;
    const path = base.path.concat(match.path);
    return { value: match.value, raw: match.value, path, pointer: base.pointer + toJsonPointer(match.path), node: found.node, range: rangeOfNode(this.document, found.node), viaAlias: found.viaAlias };
  }

  private problem(field: string, at: Located<unknown>, message: string): undefined {
    this.problems.push({ field, message, pointer: at.pointer, range: at.range });
    return undefined;
  }

  private typed<T>(field: string, at: Located<unknown> | undefined, read: (raw: unknown) => { ok: true; value: T } | { ok: false; error: string }): Located<T> | undefined {
    if (!at) return undefined;
    const result = read(at.raw);
    if (!result.ok) return this.problem(field, at, result.error);
    // Field by field: a spread followed by a field takes the JavaScript engine's slow path, and this runs for every value of every disk.
    return { value: result.value, raw: at.raw, path: at.path, pointer: at.pointer, node: at.node, range: at.range, viaAlias: at.viaAlias };
  }

  machines(): MachineSpec[] {
    const NO_PATH: PathSegment[] = [];
    const { mapping, document } = this;
    const roots = mapping.machines ? select(mapping.machines, document.data) : [{ path: NO_PATH, value: document.data }];
    return roots.map((root, index) => this.machine(root.path, root.value, index));
  }

  private machine(path: PathSegment[], value: unknown, index: number): MachineSpec {
    const base = this.base(path, value);
    const place = base.found;
    const fields = this.mapping.machineFields;
    const nameAt = this.raw(fields.name, base);
    const memory = this.typed('memory', this.raw(fields.memory, base), parseSize);
    const host = this.typed('host', this.raw(fields.host, base), (v) =>
      (typeof v === 'string' && v.trim() !== '') || typeof v === 'number' ? { ok: true, value: String(v).trim() } : { ok: false, error: `a host name must be a non-empty string, got ${JSON.stringify(v)}` });
    const hasName = nameAt !== undefined && (typeof nameAt.raw === 'string' || typeof nameAt.raw === 'number');
    const machine: MachineSpec = {
      name: hasName ? String(nameAt.raw) : this.mapping.machines ? `machine ${index + 1}` : this.document.path.split(/[\\/]/).pop() ?? 'machine',
      named: hasName || !this.mapping.machines,
      path,
      pointer: base.pointer,
      range: place ? rangeOfNode(this.document, place.node) : this.document.lines.range(0, 0),
      node: place?.node,
      memory,
      ...(host ? { host } : {}),
      disks: [],
    };
    select(this.mapping.disks, value).forEach((match, i) => {
      if (!isRecord(match.value)) return;
      const disk = this.disk(machine, [...path, ...match.path], match.value, `disk ${i + 1}`);
      if (disk) machine.disks.push(disk);
    });
    return machine;
  }

  disk(machine: MachineSpec, path: PathSegment[], value: Record<string, unknown>, fallbackName: string, depth = 0): DiskSpec | undefined {
    const base = this.base(path, value);
    const place = base.found;
    if (!place) return undefined;
    const f = this.mapping.diskFields;
    const raw = (field: DiskField) => this.raw(f[field], base);
    const size = (field: DiskField) => this.typed(field, raw(field), parseSize);
    const nameAt = raw('name');
    const values: DiskValues = {
      size: size('size'),
      clusterSize: this.typed('clusterSize', raw('clusterSize'), (v) => {
        const parsed = parseSize(v);
        return parsed.ok ? checkClusterSize(parsed.value) : parsed;
      }),
      format: this.typed('format', raw('format'), (v) => (typeof v === 'string' ? { ok: true, value: v } : { ok: false, error: 'a disk format must be a string such as "qcow2"' })),
      l2Cache: size('l2Cache'),
      refcountCache: size('refcountCache'),
      combinedCache: size('combinedCache'),
      cacheEntrySize: size('cacheEntrySize'),
      cleanupInterval: this.typed('cleanupInterval', raw('cleanupInterval'), parseInterval),
      extendedL2: this.typed('extendedL2', raw('extendedL2'), (v) => {
        if (typeof v === 'boolean') return { ok: true, value: v };
        const word = typeof v === 'string' ? BOOLEAN_WORDS[v.trim().toLowerCase()] : undefined;
        return word === undefined ? { ok: false, error: `expected true or false for extended L2, got ${JSON.stringify(v)}` } : { ok: true, value: word };
      }),
      image: this.typed('image', raw('image'), (v) => (typeof v === 'string' && v.length > 0 ? { ok: true, value: v } : { ok: false, error: 'an image path must be a non-empty string' })),
      requestSize: this.typed('requestSize', raw('requestSize'), (v) => {
        const parsed = parseSize(v);
        if (parsed.ok && parsed.value === 0n) return { ok: false, error: 'a guest write size must be at least 1 byte' };
        return parsed;
      }),
      pattern: this.typed('pattern', raw('pattern'), (v) => {
        if (typeof v !== 'string') return { ok: false, error: `the access pattern ${JSON.stringify(v)} is not text: use ${PATTERN_HELP}` };
        const access = accessOfPattern(v);
        return access.ok ? { ok: true, value: v } : access;
      }),
      trace: this.typed('trace', raw('trace'), (v) => {
        const paths = typeof v === 'string' ? [v] : Array.isArray(v) ? v : undefined;
        if (paths === undefined || paths.length === 0 || !paths.every((p): p is string => typeof p === 'string' && p.length > 0)) {
          return { ok: false, error: 'a trace must be a file path, or a non-empty list of file paths, relative to the definition file' };
        }
        return { ok: true, value: paths };
      }),
    };
    const cluster = values.clusterSize?.value ?? this.mapping.assume.clusterSize;
    if (values.extendedL2?.value) {
      const check = checkExtendedL2(cluster, true);
      if (!check.ok) this.problem('extendedL2', values.extendedL2, check.error), (values.extendedL2 = undefined);
    }
    if (values.cacheEntrySize) {
      const check = checkSlice(values.cacheEntrySize.value, cluster);
      if (!check.ok) this.problem('cacheEntrySize', values.cacheEntrySize, check.error), (values.cacheEntrySize = undefined);
    }
    if (values.size && values.size.value === 0n) this.problem('size', values.size, 'a virtual size of 0 bytes has nothing to cache'), (values.size = undefined);
    const format = values.format?.value ?? this.mapping.assume.format;
    const hasName = nameAt !== undefined && (typeof nameAt.raw === 'string' || typeof nameAt.raw === 'number');
    const disk: DiskSpec = {
      name: hasName ? String(nameAt.raw) : fallbackName,
      named: hasName,
      machine,
      path,
      pointer: base.pointer,
      range: rangeOfNode(this.document, place.node),
      node: place.node,
      values,
      isQcow2: format.trim().toLowerCase() === 'qcow2',
      fallbackName,
    };
    const backing = raw('backing');
    if (backing) {
      if (typeof backing.raw === 'string' && backing.raw.length > 0) disk.backing = { file: { ...backing, value: backing.raw } };
      else if (isRecord(backing.raw) && depth < 32) {
        const nested = this.disk(machine, backing.path, backing.raw, `${disk.name} backing`, depth + 1);
        if (nested) disk.backing = { disk: nested };
      } else if (!isRecord(backing.raw)) this.problem('backing', backing, 'a backing disk must be an image path or a disk object');
    }
    return disk;
  }
}

/** Extracts one disk again (after an edit inside it), with the problems its values have. */
export function extractDisk(document: DefinitionDocument, mapping: Mapping, machine: MachineSpec, path: PathSegment[], value: unknown, fallbackName: string): { disk?: DiskSpec; problems: ValueProblem[] } {
  if (!isRecord(value)) return { problems: [] };
  const extractor = new Extractor(document, mapping);
  const disk = extractor.disk(machine, path, value, fallbackName);
  return { disk, problems: extractor.problems };
}

export function extractMachines(document: DefinitionDocument, mapping: Mapping): Extraction {
  const extractor = new Extractor(document, mapping);
  const machines = extractor.machines();
  return { machines, problems: extractor.problems };
}
