// Fuzzing the three entry points users feed text to (ARCHITECTURE.md: user input never throws
// across a module boundary): readDefinition, loadMapping and lintDocument get generated YAML and
// JSON texts and generated mapping files. Every run must end in a document or problems, findings
// with real places, and fixes that leave the file readable; never an exception, never a hang.
// Inputs that once hung are run in a child process, so a hang fails one test instead of the suite.
import { strict as assert } from 'node:assert';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import fc from 'fast-check';
import { stringify as yamlStringify } from 'yaml';
import { lintDocument, loadMapping, RULE_IDS, type FileReport } from '../../src/lint';
import { readDefinition } from '../../src/model/document';
import { parseJsonPointer } from '../../src/model/jsonpath';
import { applyEdits } from '../../src/model/edits';
import { BASE_MAPPING, mappingFor, mergeMapping } from '../rules/harness';

const SEVERITIES = new Set(['error', 'warning', 'info']);
const RULES = new Set(RULE_IDS);

/** A place must lie inside the text it points into. */
function assertRange(text: string, range: { offset: number; length: number; line: number; column: number }, what: string): void {
  assert.ok(Number.isInteger(range.offset) && range.offset >= 0 && range.offset + range.length <= text.length, `${what}: offset ${range.offset}+${range.length} outside ${text.length}`);
  const lines = text.split(/\r\n|\r|\n/); // line breaks as YAML 1.2 §5.4 and editors count them
  assert.ok(range.line >= 1 && range.line <= lines.length, `${what}: line ${range.line}`);
  assert.ok(range.column >= 1 && range.column <= (lines[range.line - 1] as string).length + 1, `${what}: column ${range.column}`);
}

/** A message says something, and shows no internals: no undefined, no [object Object], no stack. */
function assertMessage(message: string, source: string): void {
  assert.ok(message.trim().length > 0, 'a message says something');
  assert.doesNotMatch(message, /\bundefined\b|\[object Object\]|\n\s+at /, message);
  // NaN only where the user wrote one (YAML's .nan).
  if (!/nan/i.test(source)) assert.doesNotMatch(message, /\bNaN\b/, message);
}

// ---- generated texts ----

const TOKENS = [
  '{', '}', '[', ']', ':', ': ', ',', '- ', ' ', '  ', '\n', '\r\n', '\t', '"', "'", '#', '# cachewright-accept l2-cache-undersized: r\n',
  '&a ', '*a', '!!str ', '!tag ', '|\n', '>\n', '---\n', '...\n', '%YAML 1.2\n', '? ', '~', 'null', 'true', '\uFEFF', '\u{1F6A2}',
  'machines', 'disks', 'name', 'size', 'cluster', 'cache', 'l2', 'refcount', 'total', 'slice', 'cleanup', 'backing', 'memory',
  '1T', '64K', '2.5M', '0', '-1', '1e309', '0x10', '99999999999999999999', '12Q', '1 KB', '0.3K', '10m',
];
const tokenSoup = fc.array(fc.constantFrom(...TOKENS), { maxLength: 60 }).map((parts) => parts.join(''));
const anyText = fc.oneof(tokenSoup, fc.string({ unit: 'grapheme', maxLength: 200 }), fc.string({ unit: 'binary', maxLength: 200 }));

// ---- generated definitions (data, then written as YAML block, YAML flow or JSON) ----

const sizeValue = fc.oneof(
  fc.constantFrom('1T', '20G', '64K', '256K', '2M', '1M', '4K', '2.5M', '1 GiB', '512', '1000K', '3000K', '8M', '128M', '32M', '1P'),
  fc.constantFrom('12Q', '1 KB', '0.3K', '-5G', '', ' ', 'lots', '1e3', '0x10', '1_000', '९'),
  fc.integer({ min: -10, max: 2 ** 31 }),
  fc.constantFrom(0, 1.5, 2 ** 53 + 2, -0, 1e300),
  fc.constantFrom(true, false, null, [], {}, ['1T'], { a: 1 }),
);
const clusterValue = fc.oneof(fc.constantFrom('512', '4K', '16K', '64K', '256K', '1M', '2M', '48K', '4M', 256, 65536), sizeValue);
const intervalValue = fc.oneof(fc.constantFrom(0, 600, '10m', '1h', '90s', '5d', -1, '0.5s', 'never'), sizeValue);
const patternValue = fc.constantFrom('random', 'sequential', 'mixed', 'zipf(0.8)', '90% on 10%', 'zipf:0.8', 'hotspot:0.9/0.1', 'bursty', 5, 'zipf()', '200% on 3%');
const maybe = <T>(arb: fc.Arbitrary<T>) => fc.option(arb, { nil: undefined, freq: 2 });

const cacheArb = fc.record({ l2: maybe(sizeValue), refcount: maybe(sizeValue), total: maybe(sizeValue), slice: maybe(clusterValue), cleanup: maybe(intervalValue) }, { requiredKeys: [] });
const diskArb = fc.letrec((tie) => ({
  disk: fc.record({
    name: maybe(fc.oneof(fc.string({ maxLength: 8 }), fc.integer(), fc.constant(null))),
    size: maybe(sizeValue),
    cluster: maybe(clusterValue),
    format: maybe(fc.constantFrom('qcow2', 'QCOW2', 'raw', 'vmdk', 7)),
    cache: maybe(fc.oneof(cacheArb, fc.constantFrom(5, 'x', null))),
    extendedL2: maybe(fc.constantFrom(true, false, 'on', 'off', 'maybe', 1)),
    image: maybe(fc.constantFrom('a.qcow2', '', 5)),
    backing: maybe(fc.oneof({ depthSize: 'small', maxDepth: 3 }, fc.constantFrom('base.qcow2', '', 7, null), tie('disk'))),
    io: maybe(fc.record({ size: maybe(sizeValue), pattern: maybe(patternValue) }, { requiredKeys: [] })),
  }, { requiredKeys: [] }),
})).disk;
const machineArb = fc.record({
  name: maybe(fc.string({ maxLength: 8 })),
  memory: maybe(sizeValue),
  disks: maybe(fc.oneof(fc.array(fc.oneof(diskArb, fc.constantFrom(1, 'x', null, [])), { maxLength: 4 }), fc.constantFrom('x', 3, null))),
}, { requiredKeys: [] });
const definitionArb = fc.record({ machines: fc.oneof(fc.array(machineArb, { maxLength: 3 }), fc.constantFrom(null, 'x', {})) }, { requiredKeys: [] });

type Written = { file: string; text: string };
const written = (data: unknown): fc.Arbitrary<Written> => fc.constantFrom<Written[]>(
  { file: 'd.yaml', text: yamlStringify(data, { aliasDuplicateObjects: false }) },
  { file: 'd.yaml', text: yamlStringify(data, { aliasDuplicateObjects: false, collectionStyle: 'flow' }) },
  { file: 'd.yaml', text: yamlStringify(data, { aliasDuplicateObjects: false }).replace(/\n/g, '\r\n') },
  { file: 'd.json', text: JSON.stringify(data, null, 2) ?? 'null' },
  { file: 'd.json', text: `\uFEFF${JSON.stringify(data) ?? 'null'}` },
).map((w) => w);

/** Selectors a mapping may use; the descendant ones only on documents without aliases (see below). */
const machinesSelector = fc.constantFrom(undefined, '$.machines[*]', '$.machines[?@.disks]', '$.machines[0:2]', '$..machines[*]', '$.machines[-1]', '$.*[*]');
const disksSelector = fc.constantFrom('$.disks[*]', '$.disks[?@.size]', '$..disks[*]', '$.disks[1:]', '$.disks[0,1]', '$..[?@.size]', '$.disks.*');
const mappingOverrides = fc.record({
  machines: machinesSelector,
  disks: disksSelector,
  assume: fc.record({
    clusterSize: fc.constantFrom('64K', '2M', '512', '1M'),
    driver: fc.constantFrom('current', 'legacy'),
    platform: fc.constantFrom('linux', 'other'),
    pattern: fc.constantFrom('random', 'sequential', 'mixed'),
    requestSize: fc.constantFrom('4K', '1', '2M'),
  }, { requiredKeys: [] }),
  budget: fc.record({ cacheShareOfMemory: fc.constantFrom(0.01, 0.05, 1) }, { requiredKeys: [] }),
}, { requiredKeys: ['disks'] });

/** RFC 6901 evaluation on the document's data: every pointer a finding carries must name a node. */
function resolves(data: unknown, pointer: string): boolean {
  const parsed = parseJsonPointer(pointer);
  if (!parsed.ok) return false;
  let node = data;
  for (const segment of parsed.value) {
    if (Array.isArray(node) && /^(0|[1-9]\d*)$/.test(String(segment)) && Number(segment) < node.length) node = node[Number(segment)];
    else if (typeof node === 'object' && node !== null && !Array.isArray(node) && Object.prototype.hasOwnProperty.call(node, segment)) node = (node as Record<string, unknown>)[String(segment)];
    else return false;
  }
  return true;
}

function checkReport(text: string, file: string, report: FileReport): void {
  const document = report.parsed ? readDefinition(`/fuzz/${file}`, text).document : undefined;
  for (const finding of report.findings) {
    if (document) assert.ok(resolves(document.data, finding.pointer), `${finding.rule}: pointer ${JSON.stringify(finding.pointer)} names no node`);
    assert.ok(RULES.has(finding.rule), finding.rule);
    assert.ok(SEVERITIES.has(finding.severity));
    assertMessage(finding.message, text);
    assertRange(text, finding.range, `${finding.rule} range`);
    assert.ok(finding.pointer === '' || finding.pointer.startsWith('/'), finding.pointer);
    if (!finding.fix) continue;
    for (const edit of finding.fix.edits) assert.ok(edit.offset >= 0 && edit.offset + edit.length <= text.length, 'an edit lies inside the text');
    const fixed = applyEdits(text, finding.fix.edits);
    const reread = readDefinition(`/fuzz/${file}`, fixed);
    assert.ok(reread.document, `the fix of ${finding.rule} must leave the file readable:\n${fixed}\n${JSON.stringify(reread.problems)}`);
  }
}

describe('fuzz: readDefinition', () => {
  it('any text, read as YAML and as JSON: a document or problems with real places, never an exception', () => {
    fc.assert(fc.property(anyText, (text) => {
      for (const file of ['/fuzz/a.yaml', '/fuzz/a.json']) {
        const result = readDefinition(file, text);
        assert.ok((result.document !== undefined) !== (result.problems.length > 0), 'either a document or problems');
        for (const p of result.problems) {
          assertMessage(p.message, text);
          assertRange(text, p.range, 'problem');
        }
      }
    }), { numRuns: 800 });
  });
});

describe('fuzz: loadMapping', () => {
  const mappingValue = fc.oneof(fc.string({ maxLength: 10 }), fc.integer(), fc.constantFrom(null, true, [], {}, '$.a', '$..', '$[', '64K', '12Q', 'off', 'loud', '/a', 'a/b'));
  const mappingArb = fc.record({
    version: fc.oneof(fc.constant(1), mappingValue),
    disks: fc.oneof(fc.constantFrom('$.volumes[*]', '$[', '$..[?@.a = 1]'), mappingValue),
    machines: maybe(fc.oneof(fc.constantFrom('$.vms[*]', 'vms'), mappingValue)),
    include: maybe(fc.oneof(fc.array(fc.constantFrom('**/*.yaml', '', '[')), mappingValue)),
    fields: fc.oneof(
      fc.record({ disk: fc.dictionary(fc.constantFrom('size', 'l2Cache', 'clusterSize', 'colour', 'backing'), fc.oneof(fc.constantFrom('$.capacity', '$..x', '$['), mappingValue)), machine: maybe(fc.dictionary(fc.constantFrom('name', 'memory', 'cpu'), mappingValue)) }, { requiredKeys: [] }),
      mappingValue,
    ),
    assume: maybe(fc.dictionary(fc.constantFrom('clusterSize', 'requestSize', 'refcountBits', 'driver', 'platform', 'pattern', 'format', 'colour'), mappingValue)),
    budget: maybe(fc.oneof(fc.record({ cacheShareOfMemory: fc.oneof(fc.double(), mappingValue) }), mappingValue)),
    rules: maybe(fc.dictionary(fc.constantFrom('l2-cache-oversized', 'nope', ''), fc.constantFrom('off', 'error', 'loud', 1))),
    accept: maybe(fc.array(fc.record({ rule: mappingValue, pointer: fc.oneof(fc.constantFrom('', '/a', '/a~1b', 'a/b', '~'), mappingValue), reason: maybe(mappingValue), file: maybe(mappingValue) }, { requiredKeys: [] }), { maxLength: 3 })),
  }, { requiredKeys: [] });
  const mappingText = fc.oneof(
    mappingArb.map((m) => ({ file: '/fuzz/cachewright.yaml', text: yamlStringify(m, { aliasDuplicateObjects: false }) })),
    mappingArb.map((m) => ({ file: '/fuzz/cachewright.json', text: JSON.stringify(m, null, 2) })),
    fc.tuple(mappingArb, fc.nat(), fc.constantFrom('', '"', ':', '{', '- ', '\n  ', '#')).map(([m, at, ins]) => {
      const text = yamlStringify(m, { aliasDuplicateObjects: false });
      const i = at % (text.length + 1);
      return { file: '/fuzz/cachewright.yaml', text: text.slice(0, i) + ins + text.slice(i + 1) };
    }),
    anyText.map((text) => ({ file: '/fuzz/cachewright.yaml', text })),
  );
  it('generated and broken mapping files: a mapping or problems at real places, never an exception', () => {
    fc.assert(fc.property(mappingText, ({ file, text }) => {
      const load = loadMapping(text, file);
      assert.ok((load.mapping !== undefined) !== (load.problems.length > 0), 'either a mapping or problems');
      for (const p of load.problems) {
        assertMessage(p.message, text);
        assertRange(text, p.range, 'mapping problem');
      }
    }), { numRuns: 600 });
  });
});

describe('fuzz: lintDocument', () => {
  it('generated definitions in YAML and JSON, generated mappings: findings at real places, fixes that keep the file readable', () => {
    fc.assert(fc.property(definitionArb.chain((data) => written(data)), mappingOverrides, ({ file, text }, overrides) => {
      const mapping = mappingFor(overrides);
      const report = lintDocument({ path: `/fuzz/${file}`, text }, mapping);
      assert.equal(report.parsed, true, `generated text must parse:\n${text}`);
      checkReport(text, file, report);
    }), { numRuns: 300 });
  });
  it('any text through the demo-like mapping: findings or problems, never an exception', () => {
    const mapping = mappingFor({ disks: '$.disks[*]' });
    fc.assert(fc.property(tokenSoup, fc.constantFrom('a.yaml', 'a.json'), (text, file) => {
      // Token soup may hold "&a ... *a": aliases, which can make cyclic data. Only fast-walker
      // selectors here; cycles with descendant selectors are checked in a child process below.
      const report = lintDocument({ path: `/fuzz/${file}`, text }, mapping);
      checkReport(text, file, report);
    }), { numRuns: 500 });
  });
  it('the same mapping file text as the docs and demo, through generated selectors, against the base fields', () => {
    const load = loadMapping(JSON.stringify(mergeMapping(BASE_MAPPING, { disks: '$..[?@.size]', machines: undefined })), '/fuzz/cachewright.json');
    assert.ok(load.mapping);
    const report = lintDocument({ path: '/fuzz/a.yaml', text: 'a:\n  b:\n    - size: 1T\n      c: { size: 2T }\n' }, load.mapping);
    assert.equal(report.disks.length, 2, 'descendant filters find disks at any depth');
  });
});

describe('fuzz: inputs that must not hang (each in a child process)', function () {
  this.timeout(60000);
  let dir = '';
  before(() => {
    dir = mkdtempSync(path.join(tmpdir(), 'cachewright-fuzz-'));
  });
  after(() => rmSync(dir, { recursive: true, force: true }));

  /** Lints `text` in a fresh node process; the generous limit only turns a hang into a failure. */
  function lintInChild(text: string, overrides: Record<string, unknown>): { status: number | null; stdout: string; stderr: string } {
    const script = path.join(dir, `case-${Math.random().toString(36).slice(2)}.ts`);
    const harness = path.resolve(__dirname, '../rules/harness');
    writeFileSync(script, `import { lintCase } from ${JSON.stringify(harness)};\nconst report = lintCase({ text: ${JSON.stringify(text)}, mapping: ${JSON.stringify(overrides)} });\nconsole.log('findings', report.findings.length);\n`);
    const run = spawnSync(process.execPath, ['--require', require.resolve('tsx/cjs'), script], { encoding: 'utf8', timeout: 8000, cwd: path.resolve(__dirname, '../..') });
    return { status: run.status, stdout: run.stdout, stderr: run.stderr };
  }

  const cases: [string, string, Record<string, unknown>][] = [
    ['a YAML alias to an ancestor (cyclic data) with a descendant disks selector', 'machines: &m [ { name: a, disks: *m } ]\n', { disks: '$..disks[*]' }],
    ['a disk that is its own backing disk through an alias', 'machines:\n  - disks:\n      - &d { size: 1G, backing: *d }\n', {}],
    ['a map that contains itself, with a descendant machines selector', 'a: &x { b: *x, disks: [] }\n', { machines: '$..*', disks: '$.disks[*]' }],
    ['deeply nested YAML flow sequences', `a: ${'['.repeat(2000)}${']'.repeat(2000)}\n`, { disks: '$..disks[*]' }],
    ['deeply nested JSON arrays', `${'['.repeat(5000)}${']'.repeat(5000)}`, {}],
  ];
  for (const [name, text, overrides] of cases) {
    it(name, () => {
      const run = lintInChild(text, overrides);
      assert.equal(run.status, 0, `exit ${run.status}; stderr: ${run.stderr.slice(0, 500)}`);
      assert.match(run.stdout, /^findings \d+/);
    });
  }
});
