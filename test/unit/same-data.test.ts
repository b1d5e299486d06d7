// sameData: value equality of plain data, checked against node:assert's deepStrictEqual (the
// platform's own structural comparison) on generated values, and on the cases that tell them apart
// from a reference comparison.
import { strict as assert } from 'node:assert';
import { isDeepStrictEqual } from 'node:util';
import fc from 'fast-check';
import { sameData } from '../../src/core/same-data';
import { NODE_UTIL } from '../helpers/sources';

describe('sameData', () => {
  const cases: { name: string; a: unknown; b: unknown; same: boolean }[] = [
    { name: 'equal bigints', a: { bytes: 65536n }, b: { bytes: 65536n }, same: true },
    { name: 'different bigints', a: { bytes: 65536n }, b: { bytes: 65537n }, same: false },
    { name: 'key order does not matter', a: { x: 1, y: 'b' }, b: { y: 'b', x: 1 }, same: true },
    { name: 'a missing key', a: { x: 1, y: 2 }, b: { x: 1, z: 2 }, same: false },
    { name: 'an array is not an object with index keys', a: ['p'], b: { 0: 'p' }, same: false },
    { name: 'arrays of different length', a: [1, 2], b: [1, 2, 3], same: false },
    { name: 'nested ranges', a: [{ range: { line: 3, column: 9 } }], b: [{ range: { line: 3, column: 9 } }], same: true },
    { name: 'null against an object', a: null, b: {}, same: false },
    { name: 'a number against its string', a: 1, b: '1', same: false },
  ];
  for (const c of cases) it(`${NODE_UTIL} ${c.name}`, () => assert.equal(sameData(c.a, c.b), c.same));

  it(`${NODE_UTIL} agrees with it on generated JSON-like data with bigints`, () => {
    let runs = 0;
    const leaf = fc.oneof(fc.integer({ min: -3, max: 3 }), fc.bigInt({ min: -3n, max: 3n }), fc.constantFrom('a', 'b'), fc.boolean());
    const { value } = fc.letrec((tie) => ({
      value: fc.oneof({ depthSize: 'small' }, leaf, fc.array(tie('value'), { maxLength: 3 }), fc.dictionary(fc.constantFrom('p', 'q', 'r'), tie('value'), { maxKeys: 3, noNullPrototype: true })),
    }));
    fc.assert(fc.property(value, value, (a, b) => {
      runs++;
      assert.equal(sameData(a, b), isDeepStrictEqual(a, b));
      assert.equal(sameData(a, structuredClone(a)), true);
    }), { numRuns: 500 });
    assert.equal(runs, 500);
  });
});
