// The JSON Schema shipped for editors (schema/cachewright.schema.json, generated from the zod schema)
// checked with a general-purpose JSON Schema validator (ajv, draft-07): it accepts the demo's
// mapping file and the docs' example, refuses what the loader refuses, and agrees with the zod
// schema on generated mapping files.
import { strict as assert } from 'node:assert';
import { readFileSync } from 'node:fs';
import * as path from 'node:path';
import Ajv from 'ajv';
import fc from 'fast-check';
import { parse as parseYaml, stringify as yamlStringify } from 'yaml';
import { mappingJsonSchema, mappingSchema } from '../../src/model/mapping-schema';

const ROOT = path.resolve(__dirname, '../..');
const SCHEMA_FILE = path.join(ROOT, 'schema/cachewright.schema.json');
const DRAFT7 = '[JSON Schema draft-07]';

const schema = JSON.parse(readFileSync(SCHEMA_FILE, 'utf8')) as Record<string, unknown>;
const ajv = new Ajv({ allErrors: true, strict: false });
const validate = ajv.compile(schema);
const errorsOf = () => (validate.errors ?? []).map((e) => `${e.instancePath} ${e.message}`).join('; ');

describe(`schema: ${DRAFT7} schema/cachewright.schema.json`, () => {
  it('is a valid draft-07 schema and the file matches what the zod schema generates now', () => {
    assert.equal(schema.$schema, 'http://json-schema.org/draft-07/schema#');
    assert.deepEqual(schema, JSON.parse(JSON.stringify(mappingJsonSchema())), 'run `npm run schema` to regenerate it');
  });
  it('accepts examples/cachewright.yaml', () => {
    const demo = parseYaml(readFileSync(path.join(ROOT, 'examples/cachewright.yaml'), 'utf8'));
    assert.ok(validate(demo), errorsOf());
  });
  it('accepts the complete example of docs/mapping-file.md', () => {
    const page = readFileSync(path.join(ROOT, 'docs/mapping-file.md'), 'utf8');
    const block = /```yaml\n([\s\S]*?)```/.exec(page);
    assert.ok(block);
    assert.ok(validate(parseYaml(block[1] as string)), errorsOf());
  });
  it('refuses unknown keys, a missing disks selector, a wrong version and a bad severity', () => {
    const demo = parseYaml(readFileSync(path.join(ROOT, 'examples/cachewright.yaml'), 'utf8')) as Record<string, unknown>;
    const cases: [string, Record<string, unknown>][] = [
      ['unknown top-level key', { ...demo, colour: 'red' }],
      ['unknown disk field', { ...demo, fields: { disk: { size: '$.s', colour: '$.c' } } }],
      ['no disks', Object.fromEntries(Object.entries(demo).filter(([k]) => k !== 'disks'))],
      ['version 2', { ...demo, version: 2 }],
      ['severity loud', { ...demo, rules: { 'l2-cache-oversized': 'loud' } }],
      ['accept without reason', { ...demo, accept: [{ rule: 'l2-cache-oversized', pointer: '/a' }] }],
      ['budget above 1', { ...demo, budget: { cacheShareOfMemory: 2 } }],
    ];
    for (const [name, value] of cases) assert.equal(validate(value), false, name);
  });
  it('property: on generated mapping objects, ajv with the shipped schema and the zod schema agree', () => {
    // A valid mapping with at most two places changed to a generated value: about half stay valid,
    // so both answers are compared.
    const base = parseYaml(readFileSync(path.join(ROOT, 'examples/cachewright.yaml'), 'utf8')) as Record<string, unknown>;
    const value = fc.oneof(
      fc.constantFrom('$.a', '', '64K', 2048, 'off', 'error', 'loud', 'current', 'legacy', 'other', 'linux', 'mixed', 'zipf(0.8)', '/a', 'qcow2', 0.5, 1, 0, -1, 16, 3, null, true, [], {}, ['x'], [''], { a: 1 }),
      fc.double({ noNaN: true, noDefaultInfinity: true }),
      fc.integer({ min: -5, max: 100 }),
    );
    const place = fc.constantFrom<(string | number)[]>(
      ['version'], ['disks'], ['machines'], ['include'], ['include', 0], ['exclude'], ['fields'], ['fields', 'disk'], ['fields', 'disk', 'size'],
      ['fields', 'disk', 'colour'], ['fields', 'machine'], ['fields', 'machine', 'memory'], ['fields', 'machine', 'cpu'], ['assume'],
      ['assume', 'clusterSize'], ['assume', 'requestSize'], ['assume', 'refcountBits'], ['assume', 'driver'], ['assume', 'platform'],
      ['assume', 'pattern'], ['assume', 'format'], ['assume', 'colour'], ['budget'], ['budget', 'cacheShareOfMemory'], ['rules'],
      ['rules', 'l2-cache-oversized'], ['rules', 'x'], ['ignore'], ['ignore', 0], ['ignore', 0, 'rule'], ['ignore', 0, 'pointer'],
      ['ignore', 0, 'reason'], ['ignore', 0, 'file'], ['ignore', 0, 'colour'], ['$schema'], ['colour'],
    );
    const change = fc.tuple(place, fc.oneof(value, fc.constant(undefined)));
    let valid = 0;
    let invalid = 0;
    fc.assert(fc.property(fc.array(change, { maxLength: 2 }), (changes) => {
      const data = structuredClone(base);
      for (const [at, v] of changes) {
        let node = data as Record<string | number, unknown>;
        for (const key of at.slice(0, -1)) {
          if (typeof node[key] !== 'object' || node[key] === null) node[key] = typeof at[at.indexOf(key) + 1] === 'number' ? [] : {};
          node = node[key] as Record<string | number, unknown>;
        }
        const last = at[at.length - 1] as string | number;
        if (v === undefined) delete node[last];
        else node[last] = v;
      }
      // Through YAML text and back, as an editor sees the file.
      const reread = parseYaml(yamlStringify(data));
      const accepted = mappingSchema.safeParse(reread).success;
      if (accepted) valid++;
      else invalid++;
      assert.equal(validate(reread), accepted, `${JSON.stringify(reread)}\najv: ${errorsOf()}`);
    }), { numRuns: 500 });
    assert.ok(valid > 50 && invalid > 50, `compared ${valid} valid and ${invalid} invalid files`);
  });
});
