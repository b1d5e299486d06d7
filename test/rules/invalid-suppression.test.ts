// invalid-suppression: a `# cachewright-accept RULE[, RULE]: REASON` comment must name known rules,
// give a reason, and sit above (or at the end of the first line of) a disk, a machine or a value
// [CONTRACTS.md section 1: "on the line above the disk or value"].
import { strict as assert } from 'node:assert';
import { CONTRACT } from '../helpers/sources';
import { applyEdits } from '../../src/model/edits';
import { findingsOf, lintCase, ruleTable } from './harness';

const RULE = 'invalid-suppression';

const disks = (...lines: string[]): string => ['machines:', '  - name: m', '    disks:', ...lines.map((l) => `      ${l}`)].join('\n') + '\n';

ruleTable(RULE, {
  valid: [
    { name: 'a comment above a disk naming one rule with a reason', text: disks('# cachewright-accept l2-cache-undersized: staging only', '- { name: a, size: 1T }') },
    { name: 'two rules, separated by a comma', text: disks('# cachewright-accept l2-cache-undersized, cluster-cow-amplification: reviewed', '- { name: a, size: 1T, cluster: 1M }') },
    { name: 'a trailing comment on the disk\'s first line', text: disks('- name: a   # cachewright-accept l2-cache-undersized: reviewed', '  size: 1T') },
    { name: 'blank lines and other comments between the suppression and the disk', text: disks('# cachewright-accept l2-cache-undersized: reviewed', '', '# the ledger volume', '- { name: a, size: 1T }') },
    { name: 'a comment above one of the disk\'s values', text: disks('- name: a', '  size: 1T', '  cache:', '    # cachewright-accept l2-cache-undersized: reviewed', '    l2: 8M') },
    { name: 'JSON has no comments: the accept list serves instead', text: '{"machines":[{"name":"m","disks":[{"name":"a","size":"1T"}]}]}' },
    // A comment that accepts nothing is only called stale when nothing the run left unread could give the finding.
    { name: 'a comment for a rule that reads the image files, above a disk without one', text: disks('# cachewright-accept image-mismatch: resized next window', '- { name: a, size: 1T }') },
    { name: 'a comment above a disk whose image file was not read (its chain is not known)', text: disks('# cachewright-accept l2-cache-oversized: headroom', '- { name: a, size: 1T, image: a.qcow2 }') },
    { name: 'a comment for a rule the mapping file turns off', text: disks('# cachewright-accept l2-cache-oversized: headroom', '- { name: a, size: 1T }'), mapping: { rules: { 'l2-cache-oversized': 'off' } } },
    { name: 'a comment above a disk whose cache split the driver refuses: the finding may come back with the fix', text: disks('# cachewright-accept l2-cache-oversized: headroom', '- { name: a, size: 8G, cache: { l2: 64M, total: 32M } }') },
    { name: 'a comment above a disk with an unreadable size', text: disks('# cachewright-accept l2-cache-oversized: headroom', '- { name: a, size: lots }') },
    { name: 'a comment above a disk that names a trace', text: disks('# cachewright-accept l2-cache-oversized: headroom', '- { name: a, size: 1T, io: { trace: a.csv } }') },
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
      name: 'a comment whose finding is gone (the disk was resized since): it accepts nothing',
      text: disks('# cachewright-accept l2-cache-oversized: headroom for growth', '- { name: a, size: 1T }'),
      findings: [{ rule: RULE, line: 4, column: 7, messageIncludes: 'for l2-cache-oversized accepts nothing' }],
    },
    {
      name: 'a comment above a value that no longer has the finding it names',
      text: disks('- name: a', '  size: 8G', '  cache:', '    # cachewright-accept l2-cache-undersized: staging copy', '    l2: 8M'),
      findings: [{ rule: RULE, line: 7, column: 11, messageIncludes: 'accepts nothing' }],
    },
    {
      name: 'a suppression above a key that only holds other keys (no value starts on its line) silences nothing',
      text: disks('- name: a', '  size: 1T', '  # cachewright-accept l2-cache-undersized: reviewed', '  cache:', '    l2: 8M'),
      findings: [{ rule: RULE, line: 6, column: 9, messageIncludes: 'not above a disk, a machine or a value' }],
    },
  ],
});

describe(`rule ${RULE}: what a broken suppression does`, () => {
  // Removal is offered as an alternative only: --fix applies a finding's own fix, never its alternatives.
  const removeStale = (text: string): string => {
    const [stale] = findingsOf(lintCase({ text }), RULE);
    assert.ok(stale, 'the stale comment is reported');
    assert.equal(stale.fix, undefined, '--fix leaves a reviewer\'s comment alone');
    const [removal] = stale.alternatives ?? [];
    assert.ok(removal, 'removing the comment is offered');
    assert.equal(removal.title, 'Remove this accept comment');
    return applyEdits(text, removal.edits);
  };

  it(`${CONTRACT} removing a stale comment on its own line takes out that line and nothing else; the lint then has nothing to say of it`, () => {
    const fixed = removeStale(disks('# cachewright-accept l2-cache-oversized: headroom for growth', '- { name: a, size: 1T }'));
    assert.equal(fixed, disks('- { name: a, size: 1T }'));
    assert.equal(findingsOf(lintCase({ text: fixed }), RULE).length, 0);
  });

  it(`${CONTRACT} removing a stale comment in a file with CRLF line breaks takes its line break with it`, () => {
    const text = disks('# cachewright-accept l2-cache-oversized: headroom for growth', '- { name: a, size: 1T }').replace(/\n/g, '\r\n');
    assert.equal(removeStale(text), disks('- { name: a, size: 1T }').replace(/\n/g, '\r\n'));
  });

  it(`${CONTRACT} removing a stale comment at the end of a disk's first line leaves the line's content`, () => {
    const fixed = removeStale(disks('- name: a   # cachewright-accept l2-cache-oversized: headroom', '  size: 1T'));
    assert.equal(fixed, disks('- name: a', '  size: 1T'));
    assert.equal(findingsOf(lintCase({ text: fixed }), RULE).length, 0);
  });

  it(`${CONTRACT} a broken suppression silences nothing: the finding it meant stays unsuppressed`, () => {
    const report = lintCase({ text: disks('# cachewright-accept l2-cache-undersized', '- { name: a, size: 1T }') });
    const finding = findingsOf(report, 'l2-cache-undersized')[0];
    assert.ok(finding);
    assert.equal(finding.accepted, undefined);
  });

  it(`${CONTRACT} a comment above a value accepts the named rule's findings at that value`, () => {
    const report = lintCase({ text: disks('- name: a', '  size: 1T', '  cache:', '    # cachewright-accept l2-cache-undersized: sized for a staging copy', '    l2: 8M') });
    assert.deepEqual(findingsOf(report, 'l2-cache-undersized')[0]?.accepted, { reason: 'sized for a staging copy', from: 'comment' });
    assert.equal(findingsOf(report, RULE).length, 0);
  });

  it(`${CONTRACT} above a line of several values (a flow map), it covers every value written on that line`, () => {
    const report = lintCase({ text: disks('- name: a', '  size: 1T', '  # cachewright-accept l2-cache-undersized, cache-options-conflict: reviewed', '  cache: { l2: 8M, refcount: 1M, total: 16M }') });
    for (const rule of ['cache-options-conflict'] as const) {
      const found = findingsOf(report, rule);
      assert.ok(found.length > 0, `${rule} is reported`);
      assert.ok(found.every((f) => f.accepted?.reason === 'reviewed'), `${rule}: ${JSON.stringify(found.map((f) => f.pointer))}`);
    }
  });
  it(`${CONTRACT} a comment above an anchored value accepts that disk's finding, not the finding of a disk that reuses the value through an alias`, () => {
    const report = lintCase({
      text: disks('- name: a', '  size: 1T', '  cache:', '    # cachewright-accept l2-cache-undersized: staging copy', '    l2: &small 8M', '- name: b', '  size: 1T', '  cache:', '    l2: *small'),
    });
    const found = findingsOf(report, 'l2-cache-undersized');
    assert.equal(found.length, 2, JSON.stringify(found.map((f) => f.pointer)));
    assert.deepEqual(found.map((f) => [f.pointer.replace(/.*\/disks\//, ''), f.accepted?.reason]), [['0/cache/l2', 'staging copy'], ['1/cache/l2', undefined]]);
  });
});
