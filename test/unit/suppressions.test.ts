// Suppressions: `# cachewright-accept RULE[, RULE]: REASON` comments in YAML, and the mapping file's
// accept list (rule + RFC 6901 pointer, optionally one file). A suppressed finding stays in the
// results with its reason (docs/cli.md); it is never dropped.
import { strict as assert } from 'node:assert';
import { readDefinition } from '../../src/model/document';
import { readSuppressions } from '../../src/model/suppressions';
import { RULE_IDS } from '../../src/lint';
import { CONTRACT } from '../helpers/sources';
import { DEFINITION_DIR, lintCase } from '../rules/harness';

const RFC6901 = '[RFC 6901]';
const KNOWN = new Set(RULE_IDS);

function comments(text: string) {
  const read = readDefinition('/defs/a.yaml', text);
  assert.ok(read.document);
  return readSuppressions(read.document, KNOWN);
}

describe('suppressions: reading the comments', () => {
  it('one rule with a reason, on its own line: applies to the next line', () => {
    const { comments: found, problems } = comments('disks:\n  # cachewright-accept l2-cache-undersized: staging only\n  - size: 1T\n');
    assert.deepEqual(problems, []);
    assert.deepEqual(found.map((c) => [c.rules, c.reason, c.targetLine, c.range.line, c.range.column]), [[['l2-cache-undersized'], 'staging only', 3, 2, 3]]);
  });
  it('several rules separated by commas (and spaces)', () => {
    const { comments: found } = comments('# cachewright-accept l2-cache-undersized,cluster-cow-amplification machine-cache-budget: reviewed 2026-11\nx: 1\n');
    assert.deepEqual(found[0]?.rules, ['l2-cache-undersized', 'cluster-cow-amplification', 'machine-cache-budget']);
    assert.equal(found[0]?.reason, 'reviewed 2026-11');
  });
  it('a reason may contain colons and "#"', () => {
    const { comments: found } = comments('# cachewright-accept l2-cache-oversized: ticket #42: growth to 2T planned\nx: 1\n');
    assert.equal(found[0]?.reason, 'ticket #42: growth to 2T planned');
  });
  it('a trailing comment applies to its own line', () => {
    const { comments: found } = comments('disks:\n  - size: 1T   # cachewright-accept l2-cache-undersized: reviewed\n');
    assert.equal(found[0]?.targetLine, 2);
  });
  it('blank lines and other comments are skipped to find the target line', () => {
    const { comments: found } = comments('# cachewright-accept l2-cache-undersized: reviewed\n\n# another comment\n\nx: 1\n');
    assert.equal(found[0]?.targetLine, 5);
  });
  it('CRLF line ends', () => {
    const { comments: found } = comments('disks:\r\n  # cachewright-accept l2-cache-undersized: staging\r\n  - size: 1T\r\n');
    assert.deepEqual(found.map((c) => [c.reason, c.targetLine]), [['staging', 3]]);
  });
  it('problems: no rule, unknown rule, no reason — each at the comment', () => {
    const { comments: found, problems } = comments('# cachewright-accept\na: 1\n  # cachewright-accept nope: x\nb: 2\n# cachewright-accept l2-cache-undersized\nc: 3\n');
    assert.deepEqual(found, []);
    assert.deepEqual(problems.map((p) => [p.range.line, p.range.column]), [[1, 1], [3, 3], [5, 1]]);
    assert.deepEqual(problems.map((p) => [p.kind, p.rules]), [['no-rule', []], ['unknown-rules', ['nope']], ['no-reason', ['l2-cache-undersized']]]);
  });
  it('JSON files have no comments: nothing is read', () => {
    const read = readDefinition('/defs/a.json', '{"a": "# cachewright-accept l2-cache-undersized: x"}');
    assert.ok(read.document);
    assert.deepEqual(readSuppressions(read.document, KNOWN), { comments: [], problems: [] });
  });
  it('the marker inside a string value is not a comment', () => {
    const { comments: found, problems } = comments('note: "see # cachewright-accept l2-cache-undersized: x"\n');
    assert.deepEqual([found, problems], [[], []]);
  });
});

describe(`suppressions: applied to findings ${CONTRACT}`, () => {
  const fleet = (comment: string, where: 'machine' | 'disk' | 'trailing') => [
    'machines:',
    ...(where === 'machine' ? [`  ${comment}`] : []),
    '  - name: pier-db',
    '    memory: 1G',
    '    disks:',
    ...(where === 'disk' ? [`      ${comment}`] : []),
    `      - name: ledger${where === 'trailing' ? `   ${comment}` : ''}`,
    '        size: 1T',
    '      - name: spare',
    '        size: 2T',
    '',
  ].join('\n');

  it('a comment above a disk suppresses that rule for that disk only, keeping the finding with its reason', () => {
    const report = lintCase({ text: fleet('# cachewright-accept l2-cache-undersized: ledger is replayed nightly', 'disk') });
    const undersized = report.findings.filter((f) => f.rule === 'l2-cache-undersized');
    assert.deepEqual(undersized.map((f) => [f.pointer, f.accepted?.reason]), [
      ['/machines/0/disks/0', 'ledger is replayed nightly'],
      ['/machines/0/disks/1', undefined],
    ]);
  });
  it('a trailing comment on the disk\'s first line does the same', () => {
    const report = lintCase({ text: fleet('# cachewright-accept l2-cache-undersized: reviewed', 'trailing') });
    assert.deepEqual(report.findings.filter((f) => f.rule === 'l2-cache-undersized').map((f) => !!f.accepted), [true, false]);
  });
  it('a comment above a machine covers the machine and all its disks', () => {
    const report = lintCase({ text: fleet('# cachewright-accept l2-cache-undersized, machine-cache-budget: lab host', 'machine') });
    const named = report.findings.filter((f) => f.rule === 'l2-cache-undersized' || f.rule === 'machine-cache-budget');
    assert.ok(named.length === 3, JSON.stringify(named.map((f) => f.rule)));
    assert.ok(named.every((f) => f.accepted?.reason === 'lab host'));
  });
  it('other rules are not suppressed', () => {
    const report = lintCase({ text: fleet('# cachewright-accept l2-cache-oversized: reviewed', 'disk') });
    assert.ok(report.findings.filter((f) => f.rule === 'l2-cache-undersized').every((f) => !f.accepted));
  });
});

describe(`suppressions: the mapping file's accept list ${RFC6901}`, () => {
  const json = '{"machines":[{"name":"m","disks":[{"name":"a","size":"1T"},{"name":"b","size":"2T","cache":{"l2":"1G"}}]}]}';
  const accept = (entries: object[]) => ({ accept: entries });
  it('rule + disk pointer suppresses the findings at or below that disk, with the entry\'s reason', () => {
    const report = lintCase({ text: json, mapping: accept([{ rule: 'l2-cache-undersized', pointer: '/machines/0/disks/0', reason: 'scratch disk' }]) });
    const f = report.findings.find((x) => x.rule === 'l2-cache-undersized');
    assert.equal(f?.accepted?.reason, 'scratch disk');
  });
  it('a pointer to one value suppresses only findings at that value', () => {
    const report = lintCase({ text: json, mapping: accept([{ rule: 'l2-cache-oversized', pointer: '/machines/0/disks/1/cache/l2', reason: 'growth' }]) });
    assert.equal(report.findings.find((x) => x.rule === 'l2-cache-oversized')?.accepted?.reason, 'growth');
    assert.equal(report.findings.find((x) => x.rule === 'l2-cache-undersized')?.accepted, undefined);
  });
  it('"" (the whole document) suppresses the rule everywhere in the file', () => {
    const report = lintCase({ text: json, mapping: accept([{ rule: 'l2-cache-undersized', pointer: '', reason: 'test fleet' }]) });
    assert.ok(report.findings.filter((x) => x.rule === 'l2-cache-undersized').every((x) => x.accepted?.reason === 'test fleet'));
  });
  it('a pointer is a path, not a prefix: /machines/0/disks/1 does not cover /machines/0/disks/10', () => {
    const many = `{"machines":[{"name":"m","disks":[${Array.from({ length: 11 }, (_, i) => `{"name":"d${i}","size":"1T"}`).join(',')}]}]}`;
    const report = lintCase({ text: many, mapping: accept([{ rule: 'l2-cache-undersized', pointer: '/machines/0/disks/1', reason: 'r' }]) });
    const suppressed = report.findings.filter((x) => x.accepted).map((x) => x.pointer);
    assert.deepEqual(suppressed, ['/machines/0/disks/1']);
  });
  it('an entry with a file applies to that file only (relative to the mapping file)', () => {
    const mapping = accept([{ rule: 'l2-cache-undersized', pointer: '', file: 'fleet/case.json', reason: 'this file' }]);
    assert.equal(DEFINITION_DIR.endsWith('/fleet'), true);
    const here = lintCase({ text: json, mapping });
    assert.ok(here.findings.filter((x) => x.rule === 'l2-cache-undersized').every((x) => x.accepted));
    const other = accept([{ rule: 'l2-cache-undersized', pointer: '', file: 'fleet/other.json', reason: 'another file' }]);
    assert.ok(lintCase({ text: json, mapping: other }).findings.every((x) => !x.accepted));
  });
  it('works for YAML files too', () => {
    const report = lintCase({ text: 'machines:\n  - disks:\n      - size: 1T\n', mapping: accept([{ rule: 'l2-cache-undersized', pointer: '/machines/0', reason: 'lab' }]) });
    assert.equal(report.findings.find((x) => x.rule === 'l2-cache-undersized')?.accepted?.reason, 'lab');
  });
});
