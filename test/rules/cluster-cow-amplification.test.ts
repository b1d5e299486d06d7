// cluster-cow-amplification: a first write of size w into an unallocated cluster of size c fills
// the whole cluster, about c / w times the data; with extended L2 the unit is a subcluster, c / 32
// ([SPEC] subclusters; amplification is common practice, docs/sources.md "Check values").
import { strict as assert } from 'node:assert';
import { COMMON, SPEC } from '../helpers/sources';
import { findingsOf, lintCase, oneDisk, ruleTable } from './harness';

const RULE = 'cluster-cow-amplification';

ruleTable(RULE, {
  valid: [
    { name: `${COMMON} 64 KiB clusters (the usual default) are not above the 64 KiB line`, text: oneDisk('size: 20G\ncluster: 64K\nio: { pattern: random }') },
    { name: `${COMMON} sequential writes fill clusters anyway`, text: oneDisk('size: 20G\ncluster: 1M\nio: { pattern: sequential }') },
    { name: `${COMMON} writes as large as the cluster move no extra bytes`, text: oneDisk('size: 20G\ncluster: 256K\nio: { size: 256K, pattern: random }') },
    { name: `${SPEC} extended L2 on 2 MiB clusters: 32 subclusters of 64 KiB each`, text: oneDisk('size: 20G\ncluster: 2M\nextendedL2: true\nio: { pattern: random }') },
    { name: 'a raw disk has no clusters', text: oneDisk('size: 20G\nformat: raw\ncluster: 2M') },
  ],
  invalid: [
    {
      name: `${COMMON} random 4 KiB writes on 256 KiB clusters: 256 KiB per first write, 64x`,
      text: oneDisk('size: 20G\ncluster: 256K\nio: { pattern: random }'),
      findings: [{ rule: RULE, line: 6, column: 18, messageIncludes: ['random 4 KiB writes', '256 KiB clusters', '64x', 'extended L2', 'fixed when an image is created', 'Back up first'] }],
    },
    {
      name: `${COMMON} mixed (assumed) 4 KiB writes on 2 MiB clusters: 512x`,
      text: oneDisk('size: 20G\ncluster: 2M'),
      findings: [{ rule: RULE, line: 6, column: 18, messageIncludes: ['mixed', '2 MiB clusters', '512x'] }],
    },
    {
      name: `${COMMON} 16 KiB writes on 1 MiB clusters: 64x`,
      text: oneDisk('size: 20G\ncluster: 1M\nio: { size: 16K }'),
      findings: [{ rule: RULE, line: 6, column: 18, messageIncludes: ['16 KiB writes', '64x'] }],
    },
    {
      name: 'an assumed 1 MiB cluster size is reported at the disk, which has no cluster key',
      text: oneDisk('size: 20G\nio: { pattern: random }'),
      mapping: { assume: { clusterSize: '1M' } },
      findings: [{ rule: RULE, line: 4, column: 9, messageIncludes: '256x' }],
    },
    {
      name: 'the pattern and write size may come from the mapping file\'s assume block',
      text: oneDisk('size: 20G\ncluster: 512K'),
      mapping: { assume: { pattern: 'random', requestSize: '8K' } },
      findings: [{ rule: RULE, line: 6, column: 18, messageIncludes: ['random 8 KiB', '64x'] }],
    },
  ],
});

describe(`rule ${RULE}: no fix`, () => {
  it(`${COMMON} the cluster size is fixed at creation, so the rule offers advice, not an edit`, () => {
    const finding = findingsOf(lintCase({ text: oneDisk('size: 20G\ncluster: 2M') }), RULE)[0];
    assert.ok(finding);
    assert.equal(finding.fix, undefined);
  });
});
