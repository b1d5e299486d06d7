// cache-not-aligned: cache sizes are multiples of the cluster size, or of the cache entry size when
// one is set; the refcount and combined caches always use whole clusters ([CACHE], docs/sources.md).
import { strict as assert } from 'node:assert';
import { CACHE } from '../helpers/sources';
import { findingsOf, lintCase, oneDisk, roundTrip, ruleTable } from './harness';

const RULE = 'cache-not-aligned';

ruleTable(RULE, {
  valid: [
    { name: `${CACHE} 2.5 MiB is 40 clusters of 64 KiB`, text: oneDisk('size: 20G\ncache: { l2: 2.5M }') },
    { name: `${CACHE} 1000 KiB is 250 entries of 4 KiB when 4 KiB slices are set`, text: oneDisk('size: 1T\ncache: { l2: 1000K, slice: 4K }') },
    { name: `${CACHE} refcount 256 KiB is 4 clusters of 64 KiB`, text: oneDisk('size: 8G\ncache: { refcount: 256K }') },
    { name: `${CACHE} a combined 3 MiB with 1 MiB clusters`, text: oneDisk('size: 100G\ncluster: 1M\ncache: { total: 3M }') },
    { name: 'bytes written as a plain number: 1048576 is 16 clusters of 64 KiB', text: oneDisk('size: 8G\ncache: { l2: 1048576 }') },
  ],
  invalid: [
    {
      name: `${CACHE} L2 1000 KiB with 64 KiB clusters rounds up to 1 MiB`,
      text: oneDisk('size: 8G\ncache:\n  l2: 1000K'),
      findings: [{ rule: RULE, line: 7, column: 15, messageIncludes: ['1000K', '1024000 bytes', 'the cluster size (64 KiB)', '1 MiB'] }],
    },
    {
      name: `${CACHE} with 4 KiB slices the unit is the entry size: 1001 KiB rounds up to 1004 KiB`,
      text: oneDisk('size: 1T\ncache: { l2: 1001K, slice: 4K }'),
      findings: [{ rule: RULE, line: 6, column: 22, messageIncludes: ['cache entry size (4 KiB)', '1004 KiB'] }],
    },
    {
      name: `${CACHE} slices apply only to L2: a refcount cache of 100 KiB still rounds to whole 64 KiB clusters`,
      text: oneDisk('size: 8G\ncache: { slice: 4K, refcount: 100K }'),
      findings: [{ rule: RULE, line: 6, column: 39, messageIncludes: ['cluster size', '128 KiB'] }],
    },
    {
      name: `${CACHE} a refcount cache rounded up past the combined size: its fix raises the combined size too`,
      text: oneDisk('size: 8G\ncluster: 256K\ncache: { refcount: 100K, total: 128K }'),
      findings: [
        { rule: RULE, line: 7, column: 28, messageIncludes: 'refcountCache 100K (102400 bytes) is not a multiple of the cluster size (256 KiB)' },
        { rule: RULE, line: 7, column: 41, messageIncludes: 'combinedCache 128K' },
      ],
    },
    {
      name: `${CACHE} a combined cache not a multiple of 1 MiB clusters`,
      text: oneDisk('size: 100G\ncluster: 1M\ncache: { total: 2500K }'),
      findings: [{ rule: RULE, line: 7, column: 25, messageIncludes: '3 MiB' }],
    },
    {
      name: 'two unaligned values on one disk give two findings, in text order',
      text: oneDisk('size: 8G\ncache:\n  l2: 1000K\n  refcount: 300K'),
      findings: [
        { rule: RULE, line: 7, column: 15 },
        { rule: RULE, line: 8, column: 21, messageIncludes: '320 KiB' },
      ],
    },
  ],
  fix: { name: 'YAML block: rounded up in place', text: oneDisk('size: 8G\ncache:\n  l2: 1000K   # hand-tuned\n  cleanup: 600') },
});

describe(`rule ${RULE}: fix values`, () => {
  it(`${CACHE} a value written in bytes is rounded up in bytes (1000000 -> 1048576)`, () => {
    const fixed = roundTrip(RULE, { name: 'bytes', text: oneDisk('size: 8G\ncache: { l2: 1000000 }') });
    assert.ok(fixed.includes('l2: 1048576 }'), fixed);
  });
  it('JSON: the rounded value keeps the string form and unit', () => {
    const fixed = roundTrip(RULE, { name: 'json', text: '{"machines":[{"name":"m","disks":[{"name":"d","size":"8G","cache":{"refcount":"100K"}}]}]}' });
    assert.ok(fixed.includes('"refcount":"128K"'), fixed);
  });
  it(`${CACHE} a part rounded up past the combined size raises the combined size with it (the driver refuses a part above it)`, () => {
    const fixed = roundTrip(RULE, { name: 'past combined', text: oneDisk('size: 8G\ncluster: 256K\ncache: { refcount: 100K, total: 128K }') });
    assert.ok(fixed.includes('refcount: 256K, total: 256K }'), fixed);
  });
  it('the fix title names the rounded size', () => {
    const finding = findingsOf(lintCase({ text: oneDisk('size: 8G\ncache: { l2: 1000K }') }), RULE)[0];
    assert.match(finding?.fix?.title ?? '', /1 MiB/);
  });
});
