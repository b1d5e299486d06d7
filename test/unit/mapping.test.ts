// The mapping file loader: every problem is reported at its own line and column in the mapping
// file (docs/mapping-file.md), for YAML and JSON mapping files; selectors are RFC 9535 JSONPath, sizes
// follow IEC 80000-13, accept pointers RFC 6901.
import { strict as assert } from 'node:assert';
import { readFileSync } from 'node:fs';
import * as path from 'node:path';
import { loadMapping, type MappingProblem } from '../../src/lint';
import { CONTRACT, IEC } from '../helpers/sources';

const RFC9535 = '[RFC 9535]';
const RFC6901 = '[RFC 6901]';
const ROOT = path.resolve(__dirname, '../..');
const YAML_PATH = '/workspace/cachewright.yaml';
const JSON_PATH = '/workspace/cachewright.json';

const MINIMAL = 'version: 1\ndisks: "$.volumes[*]"\nfields:\n  disk:\n    size: "$.capacity"\n';

function problemsOf(text: string, file = YAML_PATH): { line: number; column: number; pointer: string; message: string }[] {
  const load = loadMapping(text, file);
  assert.equal(load.mapping, undefined, 'a mapping file with problems yields no mapping');
  assert.ok(load.problems.length > 0);
  return load.problems.map((p: MappingProblem) => ({ line: p.range.line, column: p.range.column, pointer: p.pointer, message: p.message }));
}

function expectProblems(text: string, expected: { line: number; column: number; includes: string[] }[], file = YAML_PATH): void {
  const actual = problemsOf(text, file).sort((a, b) => a.line - b.line || a.column - b.column);
  assert.deepEqual(actual.map((p) => [p.line, p.column]), expected.map((e) => [e.line, e.column]), JSON.stringify(actual, null, 1));
  expected.forEach((e, i) => {
    for (const fragment of e.includes) assert.ok(actual[i]?.message.includes(fragment), `${JSON.stringify(actual[i]?.message)} should include ${JSON.stringify(fragment)}`);
  });
}

describe('mapping: files that load', () => {
  it(`${CONTRACT} the minimal mapping: version, disks and one disk field`, () => {
    const load = loadMapping(MINIMAL, YAML_PATH);
    assert.deepEqual(load.problems, []);
    assert.ok(load.mapping);
    assert.equal(load.mapping.machines, undefined, 'absent machines: the document is one machine');
  });
  it(`${CONTRACT} the demo's mapping file (examples/cachewright.yaml)`, () => {
    const file = path.join(ROOT, 'examples/cachewright.yaml');
    const load = loadMapping(readFileSync(file, 'utf8'), file);
    assert.deepEqual(load.problems, []);
  });
  it('the complete example of docs/mapping-file.md', () => {
    const page = readFileSync(path.join(ROOT, 'docs/mapping-file.md'), 'utf8');
    const block = /```yaml\n([\s\S]*?)```/.exec(page);
    assert.ok(block);
    const load = loadMapping(block[1] as string, YAML_PATH);
    assert.deepEqual(load.problems, []);
    assert.equal(load.mapping?.severities['cache-entry-size-suggested'], 'off');
  });
  it(`${IEC} assumed sizes are read with their units: 1M clusters, 8KiB writes`, () => {
    const load = loadMapping(`${MINIMAL}assume: { clusterSize: 1M, requestSize: 8KiB, driver: legacy, platform: other, refcountBits: 64 }\n`, YAML_PATH);
    assert.equal(load.mapping?.assume.clusterSize, 1048576n);
    assert.equal(load.mapping?.assume.requestSize, 8192n);
    assert.equal(load.mapping?.assume.refcountBits, 64n);
    assert.equal(load.mapping?.profile.generation, 'legacy');
  });
  it(`${CONTRACT} defaults where the file is silent: 64K clusters, qcow2, mixed, 4K writes, current/linux, 5%`, () => {
    const mapping = loadMapping(MINIMAL, YAML_PATH).mapping;
    assert.ok(mapping);
    assert.deepEqual(
      [mapping.assume.clusterSize, mapping.assume.format, mapping.assume.pattern, mapping.assume.requestSize, mapping.assume.driver, mapping.assume.platform, mapping.cacheShareOfMemory],
      [65536n, 'qcow2', 'mixed', 4096n, 'current', 'linux', 0.05],
    );
  });
  it(`${CONTRACT} a JSON mapping file loads the same`, () => {
    const load = loadMapping('{ "version": 1, "disks": "$.volumes[*]", "fields": { "disk": { "size": "$.capacity" } } }', JSON_PATH);
    assert.deepEqual(load.problems, []);
  });
  it(`${CONTRACT} include/exclude globs are relative to the mapping file; node_modules and the mapping file itself are never included`, () => {
    const mapping = loadMapping(`${MINIMAL}include: ["fleet/**/*.yaml"]\nexclude: ["fleet/retired/**"]\n`, YAML_PATH).mapping;
    assert.ok(mapping);
    assert.equal(mapping.includes('/workspace/fleet/a.yaml'), true);
    assert.equal(mapping.includes('/workspace/fleet/deep/b.yaml'), true);
    assert.equal(mapping.includes('/workspace/fleet/retired/c.yaml'), false);
    assert.equal(mapping.includes('/workspace/fleet/a.json'), false);
    assert.equal(mapping.includes('/workspace/other/a.yaml'), false);
    assert.equal(mapping.includes('/elsewhere/fleet/a.yaml'), false);
    const all = loadMapping(MINIMAL, YAML_PATH).mapping;
    assert.equal(all?.includes('/workspace/node_modules/x/a.yaml'), false);
    assert.equal(all?.includes(YAML_PATH), false);
    assert.equal(all?.includes('/workspace/a.json'), true);
  });
  it(`${CONTRACT} an accept entry's file is resolved against the mapping file's folder`, () => {
    const mapping = loadMapping(`${MINIMAL}accept:\n  - { rule: l2-cache-oversized, pointer: "/vms/0", file: fleet/a.json, reason: reviewed }\n  - { rule: l2-cache-oversized, pointer: "", reason: everywhere }\n`, YAML_PATH).mapping;
    assert.deepEqual(mapping?.accept.map((e) => e.file), ['/workspace/fleet/a.json', undefined]);
  });
});

describe('mapping: each problem at its own line and column', () => {
  it('YAML syntax error', () => {
    const problems = problemsOf('version: 1\ndisks: [ "$.volumes[*]"\nfields: {}\n');
    assert.ok(problems.every((p) => p.line >= 2), JSON.stringify(problems));
    assert.ok(problems.some((p) => /mapping file/.test(p.message)));
  });
  it('duplicate keys', () => {
    expectProblems('version: 1\ndisks: "$.a[*]"\ndisks: "$.b[*]"\nfields:\n  disk: { size: "$.s" }\n', [{ line: 3, column: 1, includes: ['unique'] }]);
  });
  it('unknown keys, each at its own key, at any depth', () => {
    expectProblems(`${MINIMAL}    colour: "$.c"\nfieldz: {}\nassume:\n  clustersize: 64K\n`, [
      { line: 6, column: 5, includes: ['unknown key "colour"', 'fields.disk'] },
      { line: 7, column: 1, includes: ['unknown key "fieldz"'] },
      { line: 9, column: 3, includes: ['unknown key "clustersize"', 'assume'] },
    ]);
  });
  it('missing disks selector', () => {
    expectProblems('version: 1\nfields:\n  disk: { size: "$.s" }\n', [{ line: 1, column: 1, includes: ['"disks" is required'] }]);
  });
  it('missing fields.disk, at the fields key', () => {
    expectProblems('version: 1\ndisks: "$.d[*]"\nfields: {}\n', [{ line: 3, column: 1, includes: ['"fields.disk" is required'] }]);
  });
  it('a version other than 1, at the value', () => {
    expectProblems('version: 2\ndisks: "$.d[*]"\nfields:\n  disk: { size: "$.s" }\n', [{ line: 1, column: 10, includes: ['version'] }]);
  });
  it(`${RFC9535} selectors that are not JSONPath, each at its value`, () => {
    expectProblems('version: 1\ndisks: "$.d[*"\nmachines: "vms[*]"\nfields:\n  disk:\n    size: "$..[?@.a = 1]"\n    name: "$.label"\n', [
      { line: 2, column: 8, includes: ['"$.d[*"', 'RFC 9535'] },
      { line: 3, column: 11, includes: ['"vms[*]"'] },
      { line: 6, column: 11, includes: ['"$..[?@.a = 1]"'] },
    ]);
  });
  it('an empty selector', () => {
    expectProblems('version: 1\ndisks: ""\nfields:\n  disk: { size: "$.s" }\n', [{ line: 2, column: 8, includes: ['disks'] }]);
  });
  it(`${IEC} bad assumed sizes, each at its value: unknown unit, not a power of two, not whole bytes, ambiguous KB`, () => {
    expectProblems(`${MINIMAL}assume:\n  clusterSize: 48K\n  requestSize: 12Q\n`, [
      { line: 7, column: 16, includes: ['assume.clusterSize', 'power of two from 512 B to 2 MiB'] },
      { line: 8, column: 16, includes: ['assume.requestSize', 'unknown unit "Q"'] },
    ]);
    expectProblems(`${MINIMAL}assume: { clusterSize: 4M, requestSize: 0.3K }\n`, [
      { line: 6, column: 24, includes: ['assume.clusterSize', '4 MiB'] },
      { line: 6, column: 41, includes: ['assume.requestSize', 'whole number'] },
    ]);
    expectProblems(`${MINIMAL}assume: { requestSize: 4 KB }\n`, [{ line: 6, column: 24, includes: ['ambiguous'] }]);
    expectProblems(`${MINIMAL}assume: { requestSize: 0 }\n`, [{ line: 6, column: 24, includes: ['at least 1 byte'] }]);
  });
  it('bad refcount width, driver, platform and budget share, each at its value', () => {
    expectProblems(`${MINIMAL}assume: { refcountBits: 3 }\n`, [{ line: 6, column: 25, includes: ['refcount width 3'] }]);
    expectProblems(`${MINIMAL}assume: { driver: old }\n`, [{ line: 6, column: 19, includes: ['assume.driver', 'current', 'legacy'] }]);
    expectProblems(`${MINIMAL}assume: { platform: win }\n`, [{ line: 6, column: 21, includes: ['assume.platform'] }]);
    expectProblems(`${MINIMAL}budget: { cacheShareOfMemory: 2 }\n`, [{ line: 6, column: 31, includes: ['cacheShareOfMemory'] }]);
    expectProblems(`${MINIMAL}budget: { cacheShareOfMemory: 0 }\n`, [{ line: 6, column: 31, includes: ['cacheShareOfMemory'] }]);
  });
  it(`${CONTRACT} a size written as a fraction of a byte says what a size must be, not just "Invalid input"`, () => {
    expectProblems(`${MINIMAL}assume: { requestSize: 0.5 }\n`, [{ line: 6, column: 24, includes: ['assume.requestSize', 'bytes'] }]);
  });
  it('an unknown access pattern in assume', () => {
    expectProblems(`${MINIMAL}assume: { pattern: bursty }\n`, [{ line: 6, column: 20, includes: ['assume.pattern', 'bursty'] }]);
  });
  it('unknown rule ids in rules (at the key) and in accept (at the value)', () => {
    expectProblems(`${MINIMAL}rules:\n  l2-cache-tiny: off\naccept:\n  - { rule: no-such-rule, pointer: "/a", reason: r }\n`, [
      { line: 7, column: 3, includes: ['unknown rule id "l2-cache-tiny"'] },
      { line: 9, column: 13, includes: ['accept[0].rule', 'unknown rule id "no-such-rule"'] },
    ]);
  });
  it('a severity that is not error, warning, info or off', () => {
    expectProblems(`${MINIMAL}rules:\n  l2-cache-oversized: loud\n`, [{ line: 7, column: 23, includes: ['error', 'warning', 'info', 'off'] }]);
  });
  it(`${RFC6901} accept pointers that are not JSON Pointers, each at its value`, () => {
    expectProblems(`${MINIMAL}accept:\n  - { rule: l2-cache-oversized, pointer: "vms/0", reason: r }\n  - rule: l2-cache-oversized\n    pointer: "#/vms/1"\n    reason: r\n`, [
      { line: 7, column: 42, includes: ['accept[0].pointer', '"vms/0"', 'start with "/"'] },
      { line: 9, column: 14, includes: ['accept[1].pointer'] },
    ]);
  });
  it(`${CONTRACT} an accept entry without a reason`, () => {
    expectProblems(`${MINIMAL}accept:\n  - { rule: l2-cache-oversized, pointer: "/a" }\n`, [{ line: 7, column: 5, includes: ['reason', 'required'] }]);
  });
  it('a mapping file that is not a map at all', () => {
    expectProblems('- 1\n', [{ line: 1, column: 1, includes: ['expected object'] }]);
    const empty = problemsOf('');
    assert.ok(empty.some((p) => /disks/.test(p.message)));
  });
});

describe('mapping: problems of both kinds in one file', () => {
  // A schema problem (an unknown key) does not hide a bad selector: both are named in one run.
  it('an unknown key and a bad selector are both reported in one run', () => {
    expectProblems('version: 1\ndisks: "$.d["\nfields:\n  disk: { size: "$.s", colour: "$.c" }\n', [
      { line: 2, column: 8, includes: ['"$.d["'] },
      { line: 4, column: 24, includes: ['unknown key "colour"'] },
    ]);
  });
});

describe('mapping: JSON mapping files', () => {
  it(`${CONTRACT} a JSON syntax error at its line and column`, () => {
    expectProblems('{\n  "version": 1,\n  "disks": \n}\n', [{ line: 4, column: 1, includes: ['not valid JSON'] }], JSON_PATH);
  });
  it('unknown keys and bad values at their places in JSON', () => {
    expectProblems('{\n  "version": 1,\n  "disks": "$.d[*]",\n  "fields": { "disk": { "size": "$.s", "colour": 1 } },\n  "budget": { "cacheShareOfMemory": -1 }\n}\n', [
      { line: 4, column: 40, includes: ['unknown key "colour"'] },
      { line: 5, column: 37, includes: ['cacheShareOfMemory'] },
    ], JSON_PATH);
  });
  it(`${RFC9535} ${RFC6901} selector, rule id and pointer problems at their places in JSON`, () => {
    expectProblems('{\n  "version": 1,\n  "disks": "$.d[",\n  "fields": { "disk": { "size": "$.s" } },\n  "accept": [\n    { "rule": "nope", "pointer": "p", "reason": "r" }\n  ]\n}\n', [
      { line: 3, column: 12, includes: ['"$.d["'] },
      { line: 6, column: 15, includes: ['unknown rule id "nope"'] },
      { line: 6, column: 34, includes: ['"p" is not a JSON Pointer'] },
    ], JSON_PATH);
  });
});

describe('mapping: never throws', () => {
  it('hostile but parseable inputs give problems, not exceptions', () => {
    const texts = [
      'version: 1\ndisks: 5\nfields: []\n',
      'version: 1\ndisks: "$.d[*]"\nfields:\n  disk: { size: 5 }\n',
      'version: 1\ndisks: "$.d[*]"\nfields:\n  disk: { size: "$.s" }\nassume: { clusterSize: -1, requestSize: [] }\n',
      'a: &x [*x]\n',
      'version: 1\ndisks: "$.d[*]"\nfields:\n  disk: { size: "$.s" }\nassume: { refcountBits: 1.5 }\n',
      '\uFEFFversion: 1\n',
      'version: 1\r\ndisks: "$.d["\r\nfields:\r\n  disk: { size: "$.s" }\r\n',
      'version: 1\ndisks: "$.d[*]"\nfields:\n  disk: { size: "$.s" }\naccept: [ { rule: 1, pointer: 2, reason: 3 } ]\n',
    ];
    for (const text of texts) {
      const load = loadMapping(text, YAML_PATH);
      assert.ok(load.mapping || load.problems.length > 0, text);
      for (const p of load.problems) assert.ok(p.range.line >= 1 && p.range.column >= 1, JSON.stringify(p));
    }
  });
  it('CRLF: lines and columns count the same as with LF', () => {
    const crlf = problemsOf('version: 1\r\ndisks: "$.d["\r\nfields:\r\n  disk: { size: "$.s" }\r\n');
    assert.deepEqual(crlf.map((p) => [p.line, p.column]), [[2, 8]]);
  });
});
