// Proposes a starter mapping file from one open definition: it looks for arrays of objects whose keys
// look like disks (size-like, cluster-like, cache-like keys) and for the array of machines that holds
// them, then names the fields it recognises. Only a proposal: the user reviews it before it is written.
// Pure: no editor, no file system.

interface ArrayGroup {
  /** JSON path with '*' for every array index on the way. */
  shape: Array<string | '*'>;
  objects: Array<Record<string, unknown>>;
}

export interface StarterProposal {
  machines?: string;
  disks: string;
  machineFields: Record<string, string>;
  diskFields: Record<string, string>;
  include: string[];
  /** The mapping file's text, in YAML. */
  text: string;
  /** A short description for the confirmation prompt. */
  summary: string;
  /** Fields read from a key whose name does not say what it holds: field -> why it was guessed so. */
  guessed: Record<string, string>;
}

const isRecord = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);
const norm = (key: string): string => key.toLowerCase().replace(/[^a-z0-9]/g, '');

const SIZE_KEY = /^(size|capacity|virtualsize|disksize|vsize|sizebytes|volumesize|length)$/;
const CLUSTER_KEY = /cluster|^block$|^blocksize$|^granularity$/;
const CACHE_KEY = /l2|refcount|cache/;

/**
 * Field name -> key pattern, most specific first; a key is used for one field only. A third element
 * marks a guess: the key's name does not say what the value means, so the proposal says what it
 * assumed (a bare `cache` is read as the L2 cache, as `cachewright size --cache` reads it).
 */
type FieldKey = [field: string, key: RegExp, guess?: string];
const DISK_FIELD_KEYS: FieldKey[] = [
  ['cacheEntrySize', /slice|entrysize/],
  ['refcountCache', /refcount/],
  ['l2Cache', /^l2(cache)?(size)?$|^l2cache/],
  ['combinedCache', /^(combinedcache|cachecombined|totalcache|cachetotal)$/],
  ['l2Cache', /^(cache|cachesize)$/, 'read as the L2 cache; if it holds the L2 and refcount caches together, map it as combinedCache'],
  ['combinedCache', /^(total|combined)$/, 'read as the combined (L2 + refcount) cache'],
  ['cleanupInterval', /cleanup|sweep|^interval$/],
  ['extendedL2', /extended|subcluster/],
  ['clusterSize', /cluster/],
  ['clusterSize', /^block$|^blocksize$|^granularity$/, 'read as the cluster size'],
  ['size', SIZE_KEY],
  ['name', /^(name|label|id|device|dev|target|disk)$/],
  ['format', /^(format|kind|type|imageformat)$/],
  ['backing', /^(backing|base|backingfile|parent|backingimage)$/],
  ['image', /^(file|path|image|source|src|filename)$/],
  ['requestSize', /request|iosize|writesize|blocksizeio/],
  ['pattern', /pattern|workload|access/],
];
const MACHINE_FIELD_KEYS: FieldKey[] = [
  ['memory', /^(memory|ram|mem|memorysize|memorymb|memorygb)$/],
  ['name', /^(name|hostname|host|id|vm|machine)$/],
];

function memberSelector(keys: readonly (string | '*')[]): string {
  return `$${keys.map((k) => (k === '*' ? '[*]' : /^[A-Za-z_][A-Za-z0-9_]*$/.test(k) ? `.${k}` : `[${JSON.stringify(k)}]`)).join('')}`;
}

function collectArrays(value: unknown, shape: Array<string | '*'>, groups: Map<string, ArrayGroup>, depth: number): void {
  if (depth > 12) return;
  if (Array.isArray(value)) {
    const objects = value.filter(isRecord);
    if (objects.length > 0) {
      const key = JSON.stringify(shape);
      const group = groups.get(key) ?? { shape: [...shape], objects: [] };
      group.objects.push(...objects);
      groups.set(key, group);
    }
    for (const item of value) collectArrays(item, [...shape, '*'], groups, depth + 1);
  } else if (isRecord(value)) {
    for (const [key, member] of Object.entries(value)) collectArrays(member, [...shape, key], groups, depth + 1);
  }
}

function diskScore(objects: Array<Record<string, unknown>>): number {
  let score = 0;
  for (const object of objects) {
    const keys = flatKeys(object, 2).map((k) => norm(k.at(-1) ?? ''));
    if (keys.some((k) => SIZE_KEY.test(k))) score += 2;
    if (keys.some((k) => CLUSTER_KEY.test(k))) score += 1;
    if (keys.some((k) => CACHE_KEY.test(k))) score += 1;
    if (Object.values(object).some((v) => v === 'qcow2')) score += 1;
  }
  return score / objects.length;
}

/**
 * Key paths of members up to `depth` levels of nested objects: scalars, and nested objects
 * themselves too (a backing disk may be written as an object in place).
 */
function flatKeys(object: Record<string, unknown>, depth: number, prefix: string[] = []): string[][] {
  const out: string[][] = [];
  for (const [key, value] of Object.entries(object)) {
    out.push([...prefix, key]);
    if (isRecord(value) && depth > 0) out.push(...flatKeys(value, depth - 1, [...prefix, key]));
  }
  return out;
}

function nameFields(objects: Array<Record<string, unknown>>, table: FieldKey[], skip: ReadonlySet<string> = new Set(), guessed: Record<string, string> = {}): Record<string, string> {
  const seen = new Map<string, string[]>();
  for (const object of objects) for (const keys of flatKeys(object, 2)) if (!skip.has(keys[0] ?? '')) seen.set(keys.join('\u0000'), keys);
  const fields: Record<string, string> = {};
  const used = new Set<string>();
  for (const [field, pattern, guess] of table) {
    if (fields[field] !== undefined) continue;
    // Shallow keys first: `size` beats `io.size`.
    const candidates = [...seen.values()].filter((k) => !used.has(k.join('\u0000')) && pattern.test(norm(k.at(-1) ?? ''))).sort((a, b) => a.length - b.length);
    const pick = candidates[0];
    if (!pick) continue;
    used.add(pick.join('\u0000'));
    fields[field] = memberSelector(pick);
    if (guess) guessed[field] = `"${pick.join('.')}" ${guess}`;
  }
  return fields;
}

function includeFor(relativePath: string): string[] {
  const slash = relativePath.lastIndexOf('/');
  const dir = slash >= 0 ? relativePath.slice(0, slash) : '';
  const ext = /\.json$/i.test(relativePath) ? ['json'] : ['yaml', 'yml'];
  return ext.map((e) => (dir ? `${dir}/**/*.${e}` : `**/*.${e}`));
}

const q = (s: string): string => JSON.stringify(s);

export function proposeMapping(data: unknown, relativePath: string): StarterProposal | undefined {
  const groups = new Map<string, ArrayGroup>();
  collectArrays(data, [], groups, 0);
  const ranked = [...groups.values()]
    .map((group) => ({ group, score: diskScore(group.objects) }))
    .filter((g) => g.score >= 2)
    .sort((a, b) => b.score - a.score || b.group.shape.length - a.group.shape.length);
  const disksGroup = ranked[0]?.group;
  if (!disksGroup) return undefined;

  // The machines are the array whose items hold the disks' array: the last '*' on the disks' path.
  const star = disksGroup.shape.lastIndexOf('*');
  let machines: string | undefined;
  let disks: string;
  let machineObjects: Array<Record<string, unknown>> = [];
  if (star >= 0) {
    machines = memberSelector([...disksGroup.shape.slice(0, star), '*']);
    disks = memberSelector([...disksGroup.shape.slice(star + 1), '*']);
    machineObjects = groups.get(JSON.stringify(disksGroup.shape.slice(0, star)))?.objects ?? [];
  } else {
    disks = memberSelector([...disksGroup.shape, '*']);
    machineObjects = isRecord(data) ? [data] : [];
  }
  const diskArrayKey = disksGroup.shape[star + 1];
  const guessed: Record<string, string> = {};
  const diskFields = nameFields(disksGroup.objects, DISK_FIELD_KEYS, new Set(), guessed);
  const machineFields = nameFields(machineObjects, MACHINE_FIELD_KEYS, new Set(typeof diskArrayKey === 'string' ? [diskArrayKey] : []));
  const include = includeFor(relativePath);

  const lines: string[] = [
    '# cachewright mapping file: where disks live in these definitions (RFC 9535 JSONPath selectors).',
    `# Proposed from ${relativePath}; review each selector before relying on it.`,
    'version: 1',
    `include: [${include.map(q).join(', ')}]`,
  ];
  if (machines) lines.push(`machines: ${q(machines)}`);
  lines.push(`disks: ${q(disks)}`, 'fields:');
  if (Object.keys(machineFields).length > 0) {
    lines.push('  machine:');
    for (const [field, selector] of Object.entries(machineFields)) lines.push(`    ${field}: ${q(selector)}`);
  }
  lines.push('  disk:');
  for (const [field, selector] of Object.entries(diskFields)) {
    lines.push(`    ${field}: ${q(selector)}${guessed[field] ? `   # guessed: ${guessed[field]}` : ''}`);
  }
  lines.push(
    'assume:                 # used where a definition is silent',
    '  clusterSize: 64K',
    '  format: qcow2',
    '  driver: current       # current | legacy',
    '  platform: linux       # linux | other',
    'budget:',
    '  cacheShareOfMemory: 0.05',
    '',
  );
  const found = Object.keys(diskFields).join(', ') || 'no fields';
  const guesses = Object.keys(guessed);
  const summary = `${machines ? `machines ${machines}, ` : ''}disks ${disks}; disk fields: ${found}${machineFields.memory ? `; machine memory ${machineFields.memory}` : ''}${guesses.length > 0 ? `; guessed from the key name alone: ${guesses.join(', ')} (see the comments)` : ''}`;
  return { machines, disks, machineFields, diskFields, include, text: lines.join('\n'), summary, guessed };
}
