// Loads a mapping file: its syntax, its schema, its selectors and its assumed values, each problem
// reported at its own line and column in the mapping file.
import * as nodePath from 'node:path';
import picomatch from 'picomatch';
import { isNode } from './yaml-functions';
import type { core } from 'zod';
type ZodIssue = core.$ZodIssue;
import { driverProfile, type DriverGeneration, type HostPlatform } from '../core/profiles';
import type { SourceRange } from '../core/results';
import { checkClusterSize, checkRefcountBits, DEFAULT_CLUSTER, DEFAULT_REFCOUNT_BITS } from '../core/sizing';
import { parseShare, parseSize } from '../core/units';
import { accessOfPattern } from '../core/workload';
import { nodeAt, rangeOfNode, readDefinition, type DefinitionDocument } from './document';
import { compileSelector, parseJsonPointer, toJsonPointer, valueAtPath, type PathSegment, type Selector } from './jsonpath';
import { DISK_FIELDS, MACHINE_FIELDS, mappingSchema, type DiskField, type MachineField, type MappingFile } from './mapping-schema';
import type { Severity } from '../core/results';

export const MAPPING_FILE_NAMES = ['cachewright.yaml', 'cachewright.yml', 'cachewright.json'] as const;
export const DEFAULT_INCLUDE = ['**/*.yaml', '**/*.yml', '**/*.json'];
const ALWAYS_EXCLUDED = ['**/node_modules/**', '**/.git/**'];

/** As written: random, sequential, mixed, or a cache-model spec (see core/workload). */
export type AccessPatternText = string;

export interface Assumptions {
  clusterSize: bigint;
  format: string;
  pattern: AccessPatternText;
  requestSize: bigint;
  driver: DriverGeneration;
  platform: HostPlatform;
  refcountBits: bigint;
  /** What the recommendation from a measured trace aims for (docs/mapping-file.md, default 0.99). */
  targetHitRatio: number;
}

export interface AcceptEntry {
  rule: string;
  pointer: string;
  /** Absolute path of the definition file, or undefined for every file. */
  file?: string;
  reason: string;
  /** Where the entry is written in the mapping file. */
  range: SourceRange;
}

/** A hypervisor host's memory and the share of it the disk caches of its machines may take. */
export interface HostBudget {
  name: string;
  memory: bigint;
  cacheShare: number;
  /** Named in the mapping's hosts list (else its memory is assume.hostMemory). */
  listed: boolean;
}

export interface HostPlan {
  listed: ReadonlyMap<string, HostBudget>;
  /** assume.hostMemory: the memory of hosts the list does not name. */
  assumedMemory?: bigint;
  /** budget.hostCacheShareOfMemory (default 2%, common practice). */
  cacheShare: number;
}

export const DEFAULT_HOST_CACHE_SHARE = 0.02;

/** The budget of a host by name: listed, or assumed; undefined when the mapping knows no memory for it. */
export function hostBudget(plan: HostPlan, name: string): HostBudget | undefined {
  const listed = plan.listed.get(name);
  if (listed) return listed;
  return plan.assumedMemory === undefined ? undefined : { name, memory: plan.assumedMemory, cacheShare: plan.cacheShare, listed: false };
}

export interface Mapping {
  path: string;
  dir: string;
  file: MappingFile;
  machines?: Selector;
  disks: Selector;
  machineFields: Partial<Record<MachineField, Selector>>;
  diskFields: Partial<Record<DiskField, Selector>>;
  assume: Assumptions;
  profile: ReturnType<typeof driverProfile>;
  cacheShareOfMemory: number;
  hosts: HostPlan;
  severities: Record<string, Severity | 'off'>;
  accept: AcceptEntry[];
  /** Whether a definition file (absolute path) is one this mapping lints. */
  includes(absolutePath: string): boolean;
}

export interface MappingProblem {
  message: string;
  pointer: string;
  range: SourceRange;
}

export interface MappingLoad {
  mapping?: Mapping;
  problems: MappingProblem[];
}

function locate(doc: DefinitionDocument, path: readonly PathSegment[], key?: string): { pointer: string; range: SourceRange } {
  // The deepest node that exists stands in for a missing one.
  for (let depth = path.length; depth >= 0; depth--) {
    const prefix = path.slice(0, depth);
    const found = nodeAt(doc, prefix);
    if (!found) continue;
    if (key !== undefined && depth === path.length) {
      const child = nodeAt(doc, [...prefix, key]);
      const keyNode = child?.pair?.key;
      if (isNode(keyNode)) {
        return { pointer: toJsonPointer([...prefix, key]), range: rangeOfNode(doc, keyNode) };
      }
    }
    const keyNode = found.pair?.key;
    const anchor = depth < path.length && isNode(keyNode) ? keyNode : found.node;
    const range = rangeOfNode(doc, anchor);
    // A missing key is reported at the start of the map that lacks it, not across the whole map.
    return { pointer: toJsonPointer(prefix), range: depth < path.length ? doc.lines.range(range.offset, range.offset + Math.min(range.length, 1)) : range };
  }
  return { pointer: '', range: doc.lines.range(0, 0) };
}

/** A zod issue's path as JSON keys and indices (symbol keys cannot occur in parsed YAML or JSON). */
const pathOf = (issue: ZodIssue): PathSegment[] => issue.path.flatMap((key) => (typeof key === 'symbol' ? [] : [key]));

function describeIssue(issue: ZodIssue, data: unknown): string {
  const where = issue.path.length ? `"${issue.path.join('.')}"` : 'the mapping file';
  if (issue.code !== 'unrecognized_keys' && issue.path.length > 0 && valueAtPath(data, pathOf(issue)) === undefined) return `${where} is required`;
  switch (issue.code) {
    case 'unrecognized_keys':
      return `unknown key${issue.keys.length > 1 ? 's' : ''} ${issue.keys.map((k) => `"${k}"`).join(', ')} in ${where}`;
    case 'invalid_type':
      return issue.message.includes('received undefined') || /required/i.test(issue.message)
        ? `${where} is required`
        : `${where}: ${issue.message.replace(/^Invalid input: /, '')}`;
    default:
      return `${where}: ${issue.message.replace(/^Invalid input: /, '')}`;
  }
}

/** The selector strings a mapping file writes, wherever its schema problems are. */
function writtenSelectors(data: unknown): [PathSegment[], string][] {
  const found: [PathSegment[], string][] = [];
  const at = (path: PathSegment[]) => valueAtPath(data, path);
  for (const key of ['machines', 'disks']) {
    const value = at([key]);
    if (typeof value === 'string' && value !== '') found.push([[key], value]);
  }
  for (const group of ['machine', 'disk']) {
    const fields = at(['fields', group]);
    if (typeof fields !== 'object' || fields === null) continue;
    for (const [name, value] of Object.entries(fields)) if (typeof value === 'string' && value !== '') found.push([['fields', group, name], value]);
  }
  return found;
}

/** The hosts list, assume.hostMemory and the host share, each problem at its own place. */
function readHosts(file: MappingFile, at: (...path: PathSegment[]) => { pointer: string; range: SourceRange }, problems: MappingProblem[]): HostPlan {
  const readShare = (raw: unknown, path: PathSegment[], fallback: number): number => {
    if (raw === undefined) return fallback;
    const read = parseShare(raw);
    if (read.ok) return read.value;
    problems.push({ message: `${path.join('.')}: ${read.error}`, ...at(...path) });
    return fallback;
  };
  const cacheShare = readShare(file.budget?.hostCacheShareOfMemory, ['budget', 'hostCacheShareOfMemory'], DEFAULT_HOST_CACHE_SHARE);
  let assumedMemory: bigint | undefined;
  if (file.assume?.hostMemory !== undefined) {
    const memory = parseSize(file.assume.hostMemory);
    if (memory.ok && memory.value > 0n) assumedMemory = memory.value;
    else problems.push({ message: `assume.hostMemory: ${memory.ok ? 'a host has more than 0 bytes of memory' : memory.error}`, ...at('assume', 'hostMemory') });
  }
  const listed = new Map<string, HostBudget>();
  (file.hosts ?? []).forEach((entry, i) => {
    if (listed.has(entry.name)) problems.push({ message: `hosts[${i}].name: "${entry.name}" is listed twice`, ...at('hosts', i, 'name') });
    const memory = parseSize(entry.memory);
    if (!memory.ok || memory.value === 0n) {
      problems.push({ message: `hosts[${i}].memory: ${memory.ok ? 'a host has more than 0 bytes of memory' : memory.error}`, ...at('hosts', i, 'memory') });
      return;
    }
    listed.set(entry.name, { name: entry.name, memory: memory.value, cacheShare: readShare(entry.cacheShare, ['hosts', i, 'cacheShare'], cacheShare), listed: true });
  });
  return { listed, ...(assumedMemory !== undefined ? { assumedMemory } : {}), cacheShare };
}

const byPosition = (problems: MappingProblem[]): MappingProblem[] => problems.sort((a, b) => a.range.offset - b.range.offset);

/** A mapping file read from its text; rule ids are checked against `knownRuleIds` (the lint passes its registry: `loadMapping`). */
export function parseMapping(text: string, path: string, knownRuleIds: readonly string[] = []): MappingLoad {
  const read = readDefinition(path, text);
  if (!read.document) {
    return { problems: read.problems.map((p) => ({ message: `mapping file: ${p.message}`, pointer: '', range: p.range })) };
  }
  const doc = read.document;
  const problems: MappingProblem[] = [];
  const parsed = mappingSchema.safeParse(doc.data ?? {});
  if (!parsed.success) {
    for (const issue of parsed.error.issues) {
      const path = pathOf(issue);
      if (issue.code === 'unrecognized_keys') {
        for (const key of issue.keys) problems.push({ message: describeIssue({ ...issue, keys: [key] }, doc.data), ...locate(doc, path, key) });
      } else {
        problems.push({ message: describeIssue(issue, doc.data), ...locate(doc, path) });
      }
    }
    // Selectors are checked too, so one run names every problem of both kinds.
    for (const [path, expression] of writtenSelectors(doc.data)) {
      const compiled = compileSelector(expression);
      if (!compiled.ok) problems.push({ message: compiled.error, ...locate(doc, path) });
    }
    return { problems: byPosition(problems) };
  }
  const file = parsed.data;
  const at = (...path: PathSegment[]) => locate(doc, path);

  const compile = (expression: string | undefined, path: PathSegment[]): Selector | undefined => {
    if (expression === undefined) return undefined;
    const compiled = compileSelector(expression);
    if (compiled.ok) return compiled.value;
    problems.push({ message: compiled.error, ...at(...path) });
    return undefined;
  };
  const machines = compile(file.machines, ['machines']);
  const disks = compile(file.disks, ['disks']);
  const machineFields: Partial<Record<MachineField, Selector>> = {};
  for (const field of MACHINE_FIELDS) {
    const selector = compile(file.fields.machine?.[field], ['fields', 'machine', field]);
    if (selector) machineFields[field] = selector;
  }
  const diskFields: Partial<Record<DiskField, Selector>> = {};
  for (const field of DISK_FIELDS) {
    const selector = compile(file.fields.disk[field], ['fields', 'disk', field]);
    if (selector) diskFields[field] = selector;
  }

  const assumeSize = (key: 'clusterSize' | 'requestSize', fallback: bigint): bigint => {
    const raw = file.assume?.[key];
    if (raw === undefined) return fallback;
    const size = parseSize(raw);
    if (!size.ok) {
      problems.push({ message: `assume.${key}: ${size.error}`, ...at('assume', key) });
      return fallback;
    }
    if (key === 'clusterSize') {
      const cluster = checkClusterSize(size.value);
      if (!cluster.ok) problems.push({ message: `assume.clusterSize: ${cluster.error}`, ...at('assume', key) });
      return cluster.ok ? cluster.value : fallback;
    }
    if (size.value === 0n) problems.push({ message: 'assume.requestSize: must be at least 1 byte', ...at('assume', key) });
    return size.value === 0n ? fallback : size.value;
  };
  const clusterSize = assumeSize('clusterSize', DEFAULT_CLUSTER);
  if (file.assume?.pattern !== undefined) {
    const access = accessOfPattern(file.assume.pattern);
    if (!access.ok) problems.push({ message: `assume.pattern: ${access.error}`, ...at('assume', 'pattern') });
  }
  const requestSize = assumeSize('requestSize', 4096n);
  let targetHitRatio = 0.99;
  if (file.assume?.targetHitRatio !== undefined) {
    const target = parseShare(file.assume.targetHitRatio);
    if (target.ok && target.value > 0) targetHitRatio = target.value;
    else problems.push({ message: `assume.targetHitRatio: ${target.ok ? 'a target of 0 asks for no hits at all; use a share above 0' : target.error}`, ...at('assume', 'targetHitRatio') });
  }
  let refcountBits = DEFAULT_REFCOUNT_BITS;
  if (file.assume?.refcountBits !== undefined) {
    const bits = checkRefcountBits(BigInt(file.assume.refcountBits));
    if (bits.ok) refcountBits = bits.value;
    else problems.push({ message: `assume.refcountBits: ${bits.error}`, ...at('assume', 'refcountBits') });
  }

  const hosts = readHosts(file, at, problems);

  const known = new Set(knownRuleIds);
  if (known.size > 0) {
    for (const rule of Object.keys(file.rules ?? {})) {
      if (!known.has(rule)) problems.push({ message: `rules: unknown rule id "${rule}"`, ...locate(doc, ['rules'], rule) });
    }
    (file.accept ?? []).forEach((entry, i) => {
      if (!known.has(entry.rule)) problems.push({ message: `accept[${i}].rule: unknown rule id "${entry.rule}"`, ...at('accept', i, 'rule') });
    });
  }
  const dir = nodePath.dirname(nodePath.resolve(path));
  (file.accept ?? []).forEach((entry, i) => {
    const pointer = parseJsonPointer(entry.pointer);
    if (!pointer.ok) problems.push({ message: `accept[${i}].pointer: ${pointer.error}`, ...at('accept', i, 'pointer') });
  });
  if (problems.length > 0 || !disks) return { problems: byPosition(problems) };

  const include = picomatch(file.include ?? DEFAULT_INCLUDE, { dot: false });
  const exclude = picomatch([...(file.exclude ?? []), ...ALWAYS_EXCLUDED], { dot: true });
  const mappingPath = nodePath.resolve(path);
  const generation = file.assume?.driver ?? 'current';
  const platform = file.assume?.platform ?? 'linux';
  const mapping: Mapping = {
    path: mappingPath,
    dir,
    file,
    machines,
    disks,
    machineFields,
    diskFields,
    assume: {
      clusterSize,
      format: file.assume?.format ?? 'qcow2',
      pattern: file.assume?.pattern ?? 'mixed',
      requestSize,
      driver: generation,
      platform,
      refcountBits,
      targetHitRatio,
    },
    profile: driverProfile(generation, platform),
    cacheShareOfMemory: file.budget?.cacheShareOfMemory ?? 0.05,
    hosts,
    severities: file.rules ?? {},
    accept: (file.accept ?? []).map((entry, i) => ({
      rule: entry.rule,
      pointer: entry.pointer,
      file: entry.file === undefined ? undefined : nodePath.resolve(dir, entry.file),
      reason: entry.reason,
      range: at('accept', i).range,
    })),
    includes(absolutePath: string): boolean {
      const resolved = nodePath.resolve(absolutePath);
      if (resolved === mappingPath) return false;
      const relative = nodePath.relative(dir, resolved).split(nodePath.sep).join('/');
      if (relative.startsWith('../') || nodePath.isAbsolute(relative)) return false;
      return include(relative) && !exclude(relative);
    },
  };
  return { mapping, problems: [] };
}
