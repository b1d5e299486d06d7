// Definition documents: every value's place (1-based line and column, UTF-16 offsets) and RFC 6901
// JSON Pointer, for YAML block and flow style and JSON, with CRLF line ends, a UTF-8 byte order
// mark, YAML aliases and keys that need escaping in pointers. JSON syntax is checked against the
// platform's JSON.parse as the reference reader of RFC 8259.
import { strict as assert } from 'node:assert';
import fc from 'fast-check';
import { nodeAt, rangeOfNode, readDefinition, type DefinitionDocument } from '../../src/model/document';
import { extractMachines } from '../../src/model/disks';
import type { PathSegment } from '../../src/model/jsonpath';
import { RFC8259 } from '../helpers/sources';
import { mappingFor } from '../rules/harness';

const RFC6901 = '[RFC 6901]';
const YAML12 = '[YAML 1.2]';

function read(text: string, file = '/defs/a.yaml'): DefinitionDocument {
  const result = readDefinition(file, text);
  assert.ok(result.document, JSON.stringify(result.problems));
  return result.document;
}

/** Line, column and the text of the node at a path. */
function place(document: DefinitionDocument, path: PathSegment[]): { line: number; column: number; text: string; viaAlias: boolean } {
  const found = nodeAt(document, path);
  assert.ok(found, `nothing at ${JSON.stringify(path)}`);
  const range = rangeOfNode(document, found.node);
  return { line: range.line, column: range.column, text: document.text.slice(range.offset, range.offset + range.length), viaAlias: found.viaAlias };
}

const pick = (p: ReturnType<typeof place>) => [p.line, p.column, p.text];

describe('document: YAML block style', () => {
  const text = 'vms:\n  - hostname: tern-01\n    volumes:\n      - label: root\n        capacity: 40G   # comment\n        tuning:\n          l2: "5M"\n';
  const doc = read(text);
  it('a scalar in a nested block map: its line, column and exact text (no trailing comment)', () => {
    assert.deepEqual(pick(place(doc, ['vms', 0, 'volumes', 0, 'capacity'])), [5, 19, '40G']);
  });
  it('a quoted scalar includes its quotes', () => {
    assert.deepEqual(pick(place(doc, ['vms', 0, 'volumes', 0, 'tuning', 'l2'])), [7, 15, '"5M"']);
  });
  it('a sequence item map starts after "- "', () => {
    const p = place(doc, ['vms', 0, 'volumes', 0]);
    assert.deepEqual([p.line, p.column], [4, 9]);
  });
  it('the data is plain values for JSONPath', () => {
    assert.deepEqual(doc.data, { vms: [{ hostname: 'tern-01', volumes: [{ label: 'root', capacity: '40G', tuning: { l2: '5M' } }] }] });
  });
  it('a path that does not exist finds nothing', () => {
    assert.equal(nodeAt(doc, ['vms', 1]), undefined);
    assert.equal(nodeAt(doc, ['vms', 0, 'nope']), undefined);
    assert.equal(nodeAt(doc, ['vms', 'x']), undefined);
  });
});

describe('document: YAML flow style', () => {
  const doc = read('vms: [ { hostname: a, volumes: [ { label: root, tuning: { l2: 8M, sweep: 0 } } ] } ]\n');
  it('values inside nested flow collections on one line', () => {
    assert.deepEqual(pick(place(doc, ['vms', 0, 'volumes', 0, 'tuning', 'l2'])), [1, 63, '8M']);
    assert.deepEqual(pick(place(doc, ['vms', 0, 'volumes', 0, 'tuning', 'sweep'])), [1, 74, '0']);
  });
  it('a flow map node spans its braces', () => {
    assert.deepEqual(pick(place(doc, ['vms', 0, 'volumes', 0, 'tuning'])), [1, 57, '{ l2: 8M, sweep: 0 }']);
  });
});

describe(`document: JSON ${RFC8259}`, () => {
  const text = '{\n  "vms": [\n    {\n      "hostname": "gull-01",\n      "volumes": [ { "capacity": "500G", "tuning": { "l2": 20971520 } } ]\n    }\n  ]\n}\n';
  const doc = read(text, '/defs/a.json');
  it('is read as JSON, strings keep their quotes in the range', () => {
    assert.equal(doc.format, 'json');
    assert.deepEqual(pick(place(doc, ['vms', 0, 'hostname'])), [4, 19, '"gull-01"']);
    assert.deepEqual(pick(place(doc, ['vms', 0, 'volumes', 0, 'tuning', 'l2'])), [5, 60, '20971520']);
  });
  it('numbers are JSON numbers, not YAML scalars: "0x10" stays a string, 1e3 is 1000', () => {
    const d = read('{ "a": "0x10", "b": 1e3, "c": "yes", "d": null }', '/defs/b.json');
    assert.deepEqual(d.data, { a: '0x10', b: 1000, c: 'yes', d: null });
  });
  it('a .json file with JSON errors is not read as YAML', () => {
    for (const bad of ['{ "a": 1, }', "{ 'a': 1 }", '{ "a": 1 } // note', '{ a: 1 }', '[1, 2', '']) {
      const result = readDefinition('/defs/c.json', bad);
      assert.equal(result.document, undefined, bad);
      assert.equal(result.problems.length, 1, bad);
    }
  });
  it('property: for generated texts the reader accepts exactly what JSON.parse accepts', () => {
    const mutate = fc.tuple(fc.json(), fc.nat(), fc.constantFrom('', ',', '}', ']', '"', ':', 'x', ' ', '\\', '0', '-', '.', 'e'), fc.nat(2));
    fc.assert(fc.property(mutate, ([json, at, insert, remove]) => {
      const i = json.length === 0 ? 0 : at % (json.length + 1);
      const text = json.slice(0, i) + insert + json.slice(i + remove);
      let reference = true;
      try {
        JSON.parse(text);
      } catch {
        reference = false;
      }
      const result = readDefinition('/defs/p.json', text);
      // Duplicate member names parse under JSON.parse (the last one wins); the reader refuses them.
      const duplicate = result.problems.some((p) => /unique/i.test(p.message));
      if (!duplicate) assert.equal(result.document !== undefined, reference, JSON.stringify(text));
      for (const p of result.problems) assert.ok(p.range.offset >= 0 && p.range.offset <= text.length);
    }), { numRuns: 1000 });
  });
  it('a collection used as a key is read without a process warning on stderr (found by npm run fuzz)', async () => {
    const warnings: string[] = [];
    const listen = (warning: Error): void => {
      warnings.push(warning.message);
    };
    process.on('warning', listen);
    try {
      const result = readDefinition('/defs/keys.yaml', '{ a: 1 }: x\n? [1, 2]\n: y\n');
      assert.deepEqual(result.problems, []);
      await new Promise((resolve) => setImmediate(resolve));
    } finally {
      process.off('warning', listen);
    }
    assert.deepEqual(warnings, []);
  });
  it('property: a JSON syntax error is reported at a real line and column of the text', () => {
    fc.assert(fc.property(fc.json(), fc.nat(), (json, cut) => {
      const text = json.slice(0, cut % (json.length + 1));
      const result = readDefinition('/defs/q.json', text);
      for (const p of result.problems) {
        const lines = text.split('\n');
        assert.ok(p.range.line >= 1 && p.range.line <= lines.length);
        assert.ok(p.range.column >= 1 && p.range.column <= (lines[p.range.line - 1] as string).length + 1);
      }
    }));
  });
});

describe('document: CRLF line ends', () => {
  const lf = 'vms:\n  - hostname: a\n    volumes:\n      - { capacity: 40G }\n';
  const crlf = lf.replace(/\n/g, '\r\n');
  it('give the same lines and columns as LF', () => {
    const a = place(read(lf), ['vms', 0, 'volumes', 0, 'capacity']);
    const b = place(read(crlf), ['vms', 0, 'volumes', 0, 'capacity']);
    assert.deepEqual([b.line, b.column, b.text], [a.line, a.column, a.text]);
    assert.deepEqual([b.line, b.column], [4, 21]);
  });
  it('are remembered so inserted lines match', () => {
    assert.equal(read(crlf).eol, '\r\n');
    assert.equal(read(lf).eol, '\n');
  });
  it('in JSON too', () => {
    const d = read('{\r\n  "a": {\r\n    "b": 7\r\n  }\r\n}\r\n', '/defs/a.json');
    assert.deepEqual(pick(place(d, ['a', 'b'])), [3, 10, '7']);
  });
});

describe('document: a UTF-8 byte order mark', () => {
  it('is not part of the first key, and offsets still index the original text', () => {
    const text = '\uFEFFvms:\n  - hostname: a\n';
    const d = read(text);
    assert.deepEqual(d.data, { vms: [{ hostname: 'a' }] });
    const p = place(d, ['vms', 0, 'hostname']);
    assert.equal(p.text, 'a');
    assert.deepEqual([p.line, p.column], [2, 15]);
  });
  it('in JSON: the first line counts the mark as one UTF-16 unit', () => {
    const text = '\uFEFF{ "a": 1 }';
    const d = read(text, '/defs/a.json');
    const p = place(d, ['a']);
    assert.equal(p.text, '1');
    assert.equal(p.column, 9, 'column in UTF-16 units of the text as stored, mark included');
  });
});

describe(`document: ${YAML12} anchors and aliases`, () => {
  const text = 'defaults: &tuning { l2: 8M }\nvms:\n  - tuning: *tuning\n  - tuning: { l2: 4M }\n';
  const doc = read(text);
  it('a value reached through an alias is found at the anchor, and marked as such', () => {
    const p = place(doc, ['vms', 0, 'tuning', 'l2']);
    assert.deepEqual([p.line, p.column, p.text, p.viaAlias], [1, 25, '8M', true]);
  });
  it('a value not reached through an alias is not marked', () => {
    assert.equal(place(doc, ['vms', 1, 'tuning', 'l2']).viaAlias, false);
  });
  it('the data resolves the alias', () => {
    assert.deepEqual((doc.data as { vms: unknown[] }).vms[0], { tuning: { l2: '8M' } });
  });
  it('an alias bomb is refused with a problem, not expanded', () => {
    const bomb = ['a: &a [x, x, x, x, x, x, x, x, x, x]', ...Array.from({ length: 8 }, (_, i) => `${String.fromCharCode(98 + i)}: &${String.fromCharCode(98 + i)} [${Array(10).fill(`*${String.fromCharCode(97 + i)}`).join(', ')}]`)].join('\n');
    const result = readDefinition('/defs/bomb.yaml', bomb);
    assert.equal(result.document, undefined);
    assert.ok(result.problems.length > 0);
  });
});

describe(`document: ${RFC6901} pointers of extracted values, keys needing escapes`, () => {
  const mapping = mappingFor({
    machines: undefined,
    disks: "$['disk/s'][*]",
    fields: { disk: { size: "$['size~v']", l2Cache: "$['cache']['l2/main']" } },
  });
  it('"/" is written ~1 and "~" is written ~0, in YAML', () => {
    const d = read('disk/s:\n  - size~v: 1T\n    cache: { l2/main: 8M }\n');
    const { machines } = extractMachines(d, mapping);
    const disk = machines[0]?.disks[0];
    assert.ok(disk);
    assert.equal(disk.pointer, '/disk~1s/0');
    assert.equal(disk.values.size?.pointer, '/disk~1s/0/size~0v');
    assert.equal(disk.values.l2Cache?.pointer, '/disk~1s/0/cache/l2~1main');
    assert.deepEqual([disk.values.l2Cache?.range.line, disk.values.l2Cache?.range.column], [3, 23]);
  });
  it('and in JSON', () => {
    const d = read('{"disk/s":[{"size~v":"1T","cache":{"l2/main":"8M"}}]}', '/defs/a.json');
    const disk = extractMachines(d, mapping).machines[0]?.disks[0];
    assert.equal(disk?.values.l2Cache?.pointer, '/disk~1s/0/cache/l2~1main');
    assert.equal(disk?.values.l2Cache?.range.column, 46);
  });
  it('machines and disks get pointers from the document root', () => {
    const m = mappingFor();
    const d = read('machines:\n  - name: a\n    disks:\n      - { name: x, size: 1G }\n      - { name: y, size: 2G }\n');
    const { machines } = extractMachines(d, m);
    assert.deepEqual(machines.map((x) => x.pointer), ['/machines/0']);
    assert.deepEqual(machines[0]?.disks.map((x) => [x.pointer, x.values.size?.pointer]), [
      ['/machines/0/disks/0', '/machines/0/disks/0/size'],
      ['/machines/0/disks/1', '/machines/0/disks/1/size'],
    ]);
  });
  it('a nested backing disk gets its own pointers', () => {
    const d = read('machines:\n  - disks:\n      - size: 1G\n        backing:\n          size: 1G\n          cache: { l2: 1M }\n');
    const disk = extractMachines(d, mappingFor()).machines[0]?.disks[0];
    assert.ok(disk?.backing && 'disk' in disk.backing);
    assert.equal(disk.backing.disk.pointer, '/machines/0/disks/0/backing');
    assert.equal(disk.backing.disk.values.l2Cache?.pointer, '/machines/0/disks/0/backing/cache/l2');
  });
});

describe('document: text outside the Basic Multilingual Plane', () => {
  it('columns count UTF-16 units, as editors and SARIF do', () => {
    const d = read('vms:\n  - { hostname: "\u{1F6A2}", ram: 4G }\n');
    // the ship emoji is two UTF-16 units: "  - { hostname: " (16) + 4 for the quoted emoji + ", ram: " (7)
    assert.deepEqual(pick(place(d, ['vms', 0, 'ram'])), [2, 28, '4G']);
  });
});

describe(`document: ${YAML12} streams and merge keys`, () => {
  it('a file with several YAML documents is refused at the second one, in words of our own', () => {
    const result = readDefinition('/defs/stream.yaml', 'machines: []\n---\nmachines: []\n');
    assert.equal(result.document, undefined);
    const [problem] = result.problems;
    assert.ok(problem);
    assert.deepEqual([problem.range.line, problem.range.column], [2, 1], "at the second document's marker");
    assert.doesNotMatch(problem.message, /parseAllDocuments|YAML\./, 'the message names no library function');
  });
  it('a single document with its start and end markers is read', () => {
    assert.ok(readDefinition('/defs/one.yaml', '%YAML 1.2\n---\nmachines: []\n...\n').document);
  });
  // YAML 1.2's core schema has no merge keys; many hand-written definitions use them (a YAML 1.1
  // habit), so they are read, and a merged value is located at its anchor (common practice).
  it('a merge key (<<) brings the merged keys into the map, located at the anchor', () => {
    const d = read('base: &base { size: 1T }\ndisk:\n  <<: *base\n  name: data\n');
    assert.deepEqual((d.data as { disk: unknown }).disk, { size: '1T', name: 'data' });
    const found = nodeAt(d, ['disk', 'size']);
    assert.ok(found);
    assert.equal(found.viaAlias, true, 'a fix there would change every user of the anchor');
    assert.deepEqual([rangeOfNode(d, found.node).line, rangeOfNode(d, found.node).column], [1, 21]);
  });
});
