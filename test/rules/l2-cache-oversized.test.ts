// l2-cache-oversized: a configured L2 cache above full coverage is memory the driver never uses.
// Full coverage and the two-entry minimum come from [CACHE] (docs/sources.md "Cache sizing").
import { strict as assert } from 'node:assert';
import { CACHE } from '../helpers/sources';
import { findingsOf, lintCase, oneDisk, roundTrip, ruleTable } from './harness';

const RULE = 'l2-cache-oversized';

ruleTable(RULE, {
  valid: [
    { name: `${CACHE} check table: 8 GiB at 64 KiB with exactly its 1 MiB`, text: oneDisk('size: 8G\ncache: { l2: 1M }') },
    { name: 'a cache below full coverage is not oversized', text: oneDisk('size: 8G\ncache: { l2: 512K }') },
    { name: `${CACHE} no L2 cache configured: the default never exceeds full coverage`, text: oneDisk('size: 8G') },
    { name: `${CACHE} the L2 cache holds at least 2 entries: 128 KiB on a 1 MiB disk (one table) is the minimum, not waste`, text: oneDisk('size: 1M\ncache: { l2: 128K }') },
    { name: `${CACHE} worked example: 192 KiB for 1280 MiB at 64 KiB`, text: oneDisk('size: 1280M\ncache: { l2: 192K }') },
    { name: `${CACHE} check table: 1 TiB at 64 KiB with extended L2 uses all of 256 MiB`, text: oneDisk('size: 1T\nextendedL2: true\ncache: { l2: 256M }') },
  ],
  invalid: [
    {
      name: `${CACHE} 8 GiB at 64 KiB with 2 MiB: 1 MiB maps all of it, 1 MiB is never used`,
      text: oneDisk('size: 8G\ncache: { l2: 2M }'),
      findings: [{ rule: RULE, line: 6, column: 22, messageIncludes: ['2 MiB', '8 GiB', '1 MiB maps all of it', '1 MiB is never used'] }],
    },
    {
      name: `${CACHE} worked example: 1280 MiB at 64 KiB needs 192 KiB, so 256 KiB wastes 64 KiB`,
      text: oneDisk('size: 1280M\ncache:\n  l2: 256K'),
      findings: [{ rule: RULE, line: 7, column: 15, messageIncludes: ['192 KiB', '64 KiB is never used'] }],
    },
    {
      name: `${CACHE} above the two-entry minimum on a tiny disk: 192 KiB on 1 MiB`,
      text: oneDisk('size: 1M\ncache: { l2: 192K }'),
      findings: [{ rule: RULE, line: 6, column: 22, messageIncludes: ['128 KiB maps all of it'] }],
    },
    {
      name: 'JSON: reported at the value',
      text: '{\n  "machines": [ { "name": "pier-db", "disks": [\n    { "name": "data", "size": "8G", "cache": { "l2": "64M" } }\n  ] } ]\n}\n',
      findings: [{ rule: RULE, line: 3, column: 54, messageIncludes: '63 MiB is never used' }],
    },
  ],
  fix: { name: 'YAML flow map: lowered to full coverage in the file\'s unit style', text: oneDisk('size: 8G\ncache: { l2: 2M, cleanup: 600 }') },
});

describe(`rule ${RULE}: fix values`, () => {
  it(`${CACHE} the fix writes full coverage: 1M for 8 GiB; JSON keeps its quotes`, () => {
    const yamlFixed = roundTrip(RULE, { name: 'yaml', text: oneDisk('size: 8G\ncache: { l2: 2M }') });
    assert.ok(yamlFixed.includes('cache: { l2: 1M }'), yamlFixed);
    const jsonFixed = roundTrip(RULE, { name: 'json', text: '{ "machines": [ { "name": "m", "disks": [ { "name": "d", "size": "8G", "cache": { "l2": "64M" } } ] } ] }' });
    assert.ok(jsonFixed.includes('"l2": "1M"'), jsonFixed);
  });
  it(`${CACHE} the fix never goes below the two-entry minimum`, () => {
    const finding = findingsOf(lintCase({ text: oneDisk('size: 1M\ncache: { l2: 192K }') }), RULE)[0];
    assert.equal(finding?.fix?.edits[0]?.text, '128K');
  });
  it('a value written in IEC style keeps it ("2 MiB" becomes "1 MiB")', () => {
    const fixed = roundTrip(RULE, { name: 'iec', text: oneDisk('size: 8G\ncache:\n  l2: "2 MiB"') });
    assert.ok(fixed.includes('l2: "1 MiB"'), fixed);
  });
});
