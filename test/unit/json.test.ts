// stringifyJson against the platform's JSON.stringify (the reference for RFC 8259 text) and exact
// bigint integers.
import { strict as assert } from 'node:assert';
import fc from 'fast-check';
import { stringifyJson } from '../../src/core/json';
import { RFC8259 } from '../helpers/sources';

describe('json: stringifyJson', () => {
  it(`${RFC8259} property: for plain JSON values it writes exactly what JSON.stringify writes, at any indent`, () => {
    fc.assert(fc.property(fc.jsonValue(), fc.constantFrom(0, 2, 4), (value, indent) => {
      assert.equal(stringifyJson(value, indent), JSON.stringify(value, null, indent));
    }));
  });
  it(`${RFC8259} property: every bigint is written as its exact integer literal`, () => {
    fc.assert(fc.property(fc.bigInt({ min: -(2n ** 70n), max: 2n ** 70n }), (n) => {
      const text = stringifyJson({ bytes: n }, 0);
      assert.equal(text, `{"bytes":${n.toString()}}`);
      assert.match(text, /^\{"bytes":-?\d+\}$/); // an RFC 8259 int: no quotes, no exponent, no fraction
    }));
  });
  it(`${RFC8259} 2^61 and 2^64 - 1 print exactly, where a float would round`, () => {
    assert.equal(stringifyJson(2n ** 61n), '2305843009213693952');
    assert.equal(stringifyJson([2n ** 64n - 1n], 0), '[18446744073709551615]');
    assert.notEqual(String(Number(2n ** 64n - 1n)), '18446744073709551615');
  });
  it(`${RFC8259} bigints mix with other values like numbers do`, () => {
    const value = { virtualSize: 21474836480n, layers: 1, name: 'root', nested: { list: [1n, 2, null] } };
    const numbers = { virtualSize: 21474836480, layers: 1, name: 'root', nested: { list: [1, 2, null] } };
    assert.equal(stringifyJson(value), JSON.stringify(numbers, null, 2));
    assert.deepEqual(JSON.parse(stringifyJson(value)), numbers);
  });
  it('follows JSON.stringify for undefined, functions, non-finite numbers and empty containers', () => {
    const odd = { a: undefined, b: () => 1, c: Number.NaN, d: Number.POSITIVE_INFINITY, e: [undefined, () => 1], f: {}, g: [] };
    assert.equal(stringifyJson(odd), JSON.stringify(odd, null, 2));
    assert.equal(stringifyJson(undefined), 'null');
    assert.equal(stringifyJson('tab\there "quoted" \u2028'), JSON.stringify('tab\there "quoted" \u2028'));
  });
});
