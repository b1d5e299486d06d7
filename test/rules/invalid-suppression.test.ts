// invalid-suppression: a `# cachewright-accept RULE[, RULE]: REASON` comment must name known rules,
// give a reason, and sit above (or at the end of the first line of) a disk or machine.
import { strict as assert } from 'node:assert';
import { CONTRACT } from '../helpers/sources';
import { findingsOf, lintCase, ruleTable } from './harness';

const RULE = 'invalid-suppression';

const disks = (...lines: string[]): string => ['machines:', '  - name: m', '    disks:', ...lines.map((l) => `      ${l}`)].join('\n') + '\n';

ruleTable(RULE, {
  valid: [
    { name: 'a comment above a disk naming one rule with a reason', text: disks('# cachewright-accept l2-cache-undersized: staging only', '- { name: a, size: 1T }') },
    { name: 'two rules, separated by a comma', text: disks('# cachewright-accept l2-cache-undersized, cluster-cow-amplification: reviewed', '- { name: a, size: 1T, cluster: 1M }') },
    { name: 'a trailing comment on the disk\'s first line', text: disks('- name: a   # cachewright-accept l2-cache-undersized: reviewed', '  size: 1T') },
    { name: 'blank lines and other comments between the suppression and the disk', text: disks('# cachewright-accept l2-cache-undersized: reviewed', '', '# the ledger volume', '- { name: a, size: 1T }') },
    { name: 'JSON has no comments: the accept list serves instead', text: '{"machines":[{"name":"m","disks":[{"name":"a","size":"1T"}]}]}' },
  ],
  invalid: [
    {
      name: 'no rule named',
      text: disks('# cachewright-accept', '- { name: a, size: 1T }'),
      findings: [{ rule: RULE, line: 4, column: 7, messageIncludes: 'names no rule' }],
    },
    {
      name: 'an unknown rule id',
      text: disks('# cachewright-accept l2-cache-tiny: reviewed', '- { name: a, size: 1T }'),
      findings: [{ rule: RULE, line: 4, column: 7, messageIncludes: 'l2-cache-tiny' }],
    },
    {
      name: 'two unknown rule ids',
      text: disks('# cachewright-accept l2-cache-tiny, l2-cache-huge: reviewed', '- { name: a, size: 1T }'),
      findings: [{ rule: RULE, line: 4, column: 7, messageIncludes: 'names unknown rules l2-cache-tiny, l2-cache-huge' }],
    },
    {
      name: 'no reason',
      text: disks('# cachewright-accept l2-cache-undersized', '- { name: a, size: 1T }'),
      findings: [{ rule: RULE, line: 4, column: 7, messageIncludes: ['gives no reason', '# cachewright-accept l2-cache-undersized: REASON'] }],
    },
    {
      name: 'an empty reason after the colon',
      text: disks('# cachewright-accept l2-cache-undersized:   ', '- { name: a, size: 1T }'),
      findings: [{ rule: RULE, line: 4, column: 7, messageIncludes: 'gives no reason' }],
    },
    {
      name: 'a suppression inside a disk, above one of its values, silences nothing',
      text: disks('- name: a', '  # cachewright-accept l2-cache-undersized: reviewed', '  size: 1T'),
      findings: [{ rule: RULE, line: 5, column: 9, messageIncludes: 'not above a disk or machine' }],
    },
  ],
});

describe(`rule ${RULE}: what a broken suppression does`, () => {
  it(`${CONTRACT} a broken suppression silences nothing: the finding it meant stays unsuppressed`, () => {
    const report = lintCase({ text: disks('# cachewright-accept l2-cache-undersized', '- { name: a, size: 1T }') });
    const finding = findingsOf(report, 'l2-cache-undersized')[0];
    assert.ok(finding);
    assert.equal(finding.accepted, undefined);
  });
});
