// trace-unreadable: a trace the disk names cannot give a curve; the disk falls back to its pattern.
import { strict as assert } from 'node:assert';
import { CONTRACT } from '../helpers/sources';
import { findingsOf, lintCase, oneDisk, ruleTable, type RuleCase } from './harness';
import { TraceFolder } from './traces';

const RULE = 'trace-unreadable';
const traces = new TraceFolder().cycle('traces/good.csv', 8, 1n << 29n, 1000).file('traces/header.csv', 'offset,length\n');
const at = (disk: string, findings?: RuleCase['findings']): Omit<RuleCase, 'name'> => ({ text: oneDisk(disk), file: traces.definition, options: traces.options, ...(findings ? { findings } : {}) });

const cases = {
  good: at('size: 1T\nio: { trace: traces/good.csv }'),
  list: at('size: 1T\nio: { trace: [traces/good.csv, traces/good.csv] }'),
  raw: at('size: 1T\nformat: raw\nio: { trace: traces/none.csv }'),
  missing: at('size: 1T\nio: { trace: traces/none.csv }', [{ rule: RULE, line: 6, column: 22, messageIncludes: ['traces/none.csv: no such file or directory', 'assumed mixed pattern'] }]),
  header: at('size: 1T\nio: { trace: traces/header.csv }', [{ rule: RULE, line: 6, column: 22, messageIncludes: ['traces/header.csv: no usable request'] }]),
  secondGone: at('size: 1T\nio: { trace: [traces/good.csv, traces/gone.csv] }', [{ rule: RULE, line: 6, column: 22, messageIncludes: ['traces/gone.csv'] }]),
};

ruleTable(RULE, {
  before: () => traces.load(Object.values(cases)),
  after: () => traces.remove(),
  valid: [
    { name: 'a readable trace', ...cases.good },
    { name: 'a list of readable traces, read in order', ...cases.list },
    { name: 'a disk that is not qcow2 is not measured', ...cases.raw },
  ],
  invalid: [
    { name: `${CONTRACT} a missing file, named as the definition writes it`, ...cases.missing },
    { name: `${CONTRACT} a trace with no usable request`, ...cases.header },
    { name: 'the second trace of a list is missing', ...cases.secondGone },
  ],
});

describe(`rule ${RULE}: the disk is still checked`, () => {
  before(() => traces.load(Object.values(cases)));
  it('by its assumed pattern: a 1 TiB disk with a missing trace still gets l2-cache-undersized, with no measured figures', () => {
    const report = lintCase(cases.missing);
    assert.equal(findingsOf(report, 'l2-cache-undersized').length, 1);
    assert.doesNotMatch(findingsOf(report, 'l2-cache-undersized')[0]?.message ?? '', /measured/);
    assert.equal(report.disks[0]?.measured, undefined);
  });
});
