// cache-options-conflict: of the L2, refcount and combined cache sizes at most two may be set
// together ([CACHE], docs/sources.md "Cache sizing").
import { strict as assert } from 'node:assert';
import { CACHE } from '../helpers/sources';
import { findingsOf, lintCase, oneDisk, ruleTable } from './harness';

const RULE = 'cache-options-conflict';

ruleTable(RULE, {
  valid: [
    { name: `${CACHE} L2 and refcount together`, text: oneDisk('size: 8G\ncache: { l2: 1M, refcount: 256K }') },
    { name: `${CACHE} L2 and combined together`, text: oneDisk('size: 8G\ncache: { l2: 1M, total: 2M }') },
    { name: `${CACHE} refcount and combined together`, text: oneDisk('size: 8G\ncache: { refcount: 256K, total: 2M }') },
    { name: 'none of them: the driver defaults apply', text: oneDisk('size: 8G') },
  ],
  invalid: [
    {
      name: `${CACHE} all three set: reported at the combined size, naming each value`,
      text: oneDisk('size: 8G\ncache:\n  l2: 1M\n  refcount: 256K\n  total: 2M'),
      findings: [{ rule: RULE, line: 9, column: 18, messageIncludes: ['1M', '256K', '2M', 'Remove one'] }],
    },
    {
      name: 'JSON: all three in one flow object',
      text: '{"machines":[{"name":"m","disks":[\n{"name":"d","size":"8G","cache":{"l2":"1M","refcount":"256K","total":"2M"}}\n]}]}\n',
      findings: [{ rule: RULE, line: 2, column: 70 }],
    },
  ],
});

describe(`rule ${RULE}: related places`, () => {
  it('points at the L2 and refcount values as related locations', () => {
    const finding = findingsOf(lintCase({ text: oneDisk('size: 8G\ncache:\n  l2: 1M\n  refcount: 256K\n  total: 2M') }), RULE)[0];
    assert.deepEqual(finding?.related?.map((r) => [r.pointer, r.range.line, r.range.column]), [
      ['/machines/0/disks/0/cache/l2', 7, 15],
      ['/machines/0/disks/0/cache/refcount', 8, 21],
    ]);
    assert.equal(finding?.fix, undefined, 'which knob to drop is the user\'s choice: no fix');
  });
});
