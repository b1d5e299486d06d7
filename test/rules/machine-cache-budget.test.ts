// machine-cache-budget: the cache memory of all a machine's disks and backing layers against a share
// of its RAM. Each layer of a chain has caches of its own and the memory is their sum ([CACHE]);
// per-disk numbers come from the check table (full coverage) and the refcount default of 4 clusters.
import { strict as assert } from 'node:assert';
import { CACHE, CONTRACT } from '../helpers/sources';
import { findingsOf, lintCase, oneDisk, ruleTable, yaml } from './harness';

const RULE = 'machine-cache-budget';

ruleTable(RULE, {
  valid: [
    { name: 'no memory field: no budget to check', text: oneDisk('size: 1T\ncache: { l2: 128M }') },
    { name: `${CONTRACT} 128.25 MiB of caches is within 5% (the default share) of 16 GiB (819.2 MiB)`, text: oneDisk('size: 1T\ncache: { l2: 128M }', 'memory: 16G') },
    { name: `${CACHE} exactly at the budget is within it: 8 GiB at 64 KiB takes 1 MiB + 256 KiB; 5% of 25 MiB is 1.25 MiB`, text: oneDisk('size: 8G', 'memory: 25M') },
    { name: 'a raw disk costs no qcow2 cache memory', text: oneDisk('size: 1T\nformat: raw', 'memory: 1G') },
  ],
  invalid: [
    {
      name: `${CACHE} 1 GiB of RAM, one 1 TiB disk with 128 MiB + 256 KiB: 12.5% against 5%, reported at the memory value`,
      text: oneDisk('size: 1T\ncache: { l2: 128M }', 'memory: 1G'),
      findings: [{ rule: RULE, line: 3, column: 13, messageIncludes: ['pier-db', '128.25 MiB', '1 disk,', '12.5 %', '1 GiB RAM', 'the budget is 5 %', '51.19 MiB', 'headroom'] }],
    },
    {
      name: `${CACHE} two disks at the 32 MiB default over a 1% budget of 4 GiB`,
      text: yaml`
        machines:
          - name: pier-web
            memory: 4G
            disks:
              - { name: a, size: 1T }
              - { name: b, size: 1T }
      `,
      mapping: { budget: { cacheShareOfMemory: 0.01 } },
      findings: [{ rule: RULE, line: 3, column: 13, messageIncludes: ['64.5 MiB over 2 disks', 'the budget is 1 %'] }],
    },
    {
      name: 'a share such as 0.07 is printed as 7%, not with binary floating-point noise',
      text: oneDisk('size: 1T\ncache: { l2: 128M }', 'memory: 1G'),
      mapping: { budget: { cacheShareOfMemory: 0.07 } },
      findings: [{ rule: RULE, line: 3, column: 13, messageIncludes: 'the budget is 7 % (' }],
    },
    {
      name: `${CACHE} backing layers count: an overlay and its inline backing disk each have caches`,
      text: oneDisk('size: 256G\nbacking: { name: golden, size: 256G }', 'memory: 1G'),
      findings: [{ rule: RULE, line: 3, column: 13, messageIncludes: '64.5 MiB' }],
    },
    {
      name: 'without a machines selector the document is the machine',
      text: 'memory: 1G\ndisks:\n  - { name: data, size: 1T, cache: { l2: 128M } }\n',
      mapping: { machines: undefined },
      findings: [{ rule: RULE, line: 1, column: 9, messageIncludes: 'case.yaml' }],
    },
  ],
});

describe(`rule ${RULE}: related places`, () => {
  it('lists each disk with its cache memory and layer count', () => {
    const finding = findingsOf(lintCase({ text: oneDisk('size: 256G\nbacking: { name: golden, size: 256G }', 'memory: 1G') }), RULE)[0];
    assert.deepEqual(finding?.related?.map((r) => [r.message, r.pointer]), [['data: 64.5 MiB over 2 layers', '/machines/0/disks/0']]);
    assert.equal(finding?.fix, undefined);
  });
});
