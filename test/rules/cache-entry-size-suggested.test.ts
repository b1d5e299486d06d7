// cache-entry-size-suggested: with large clusters, a whole-table cache entry is a whole cluster of L2
// entries read on each miss; a cache entry (slice) of the host filesystem block, 4 KiB, reads only
// the part needed ([CACHE]: slices are powers of two from 512 B to the cluster size, L2 only).
import { strict as assert } from 'node:assert';
import { CACHE } from '../helpers/sources';
import { findingsOf, lintCase, oneDisk, roundTrip, ruleTable } from './harness';

const RULE = 'cache-entry-size-suggested';

ruleTable(RULE, {
  valid: [
    { name: `${CACHE} 128 KiB clusters are below the 256 KiB line`, text: oneDisk('size: 4T\ncluster: 128K') },
    { name: `${CACHE} 1 TiB at 256 KiB: full coverage is 32 MiB, which the current Linux default gives`, text: oneDisk('size: 1T\ncluster: 256K') },
    { name: `${CACHE} check table: 1 TiB at 2 MiB needs only 4 MiB, covered by default`, text: oneDisk('size: 1T\ncluster: 2M') },
    { name: 'a slice is already set', text: oneDisk('size: 4T\ncluster: 256K\ncache: { slice: 8K }') },
  ],
  invalid: [
    {
      name: `${CACHE} 4 TiB at 256 KiB: full coverage 128 MiB, default 32 MiB; 4 KiB entries suggested (reported at the disk)`,
      text: oneDisk('size: 4T\ncluster: 256K'),
      findings: [{ rule: RULE, line: 4, column: 9, messageIncludes: ['256 KiB clusters', '4 KiB cache entries', '128 MiB'] }],
    },
    {
      name: `${CACHE} 20 GiB at 256 KiB with 512 KiB of L2 cache (below the 768 KiB of whole tables): at the L2 value`,
      text: oneDisk('size: 20G\ncluster: 256K\ncache: { l2: 512K }'),
      findings: [{ rule: RULE, line: 7, column: 22, messageIncludes: ['full coverage with them: 640 KiB'] }],
    },
  ],
  fix: { name: 'YAML flow map: a 4K slice is inserted beside the L2 cache', text: oneDisk('size: 20G\ncluster: 256K\ncache: { l2: 512K }') },
});

describe(`rule ${RULE}: fix values`, () => {
  it(`${CACHE} the inserted slice is 4 KiB, in the file's unit style`, () => {
    const fixed = roundTrip(RULE, { name: 'flow', text: oneDisk('size: 20G\ncluster: 256K\ncache: { l2: 512K }') });
    assert.ok(fixed.includes('cache: { l2: 512K, slice: 4K }'), fixed);
  });
  it('the finding names the sliced full coverage: 20 GiB at 256 KiB is 81920 entries = 640 KiB, whole in 4 KiB slices', () => {
    const finding = findingsOf(lintCase({ text: oneDisk('size: 20G\ncluster: 256K\ncache: { l2: 512K }') }), RULE)[0];
    assert.ok(finding?.message.includes('640 KiB'));
  });
});
