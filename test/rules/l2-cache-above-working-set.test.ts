// l2-cache-above-working-set: with a trace, a configured L2 cache above twice the traced working set.
// A cyclic scan over 64 cache entries (64 KiB clusters, whole tables: one entry maps 512 MiB [SPEC])
// touches 64 x 64 KiB = 4 MiB of cache [MATTSON].
import { strict as assert } from 'node:assert';
import { MATTSON, SHARDS } from '../helpers/sources';
import { findingsOf, lintCase, oneDisk, ruleTable, type RuleCase } from './harness';
import { sampledTraceTable, TraceFolder } from './traces';

const RULE = 'l2-cache-above-working-set';
const MiB512 = 512n * 1024n * 1024n;
const traces = new TraceFolder().cycle('traces/cycle64.csv', 64, MiB512, 20_000);
const at = (disk: string, findings?: RuleCase['findings']): Omit<RuleCase, 'name'> => ({ text: oneDisk(disk), file: traces.definition, options: traces.options, ...(findings ? { findings } : {}) });
const TRACE = 'io: { trace: traces/cycle64.csv }';

const cases = {
  twice: at(`size: 1T\ncache: { l2: 8M }\n${TRACE}`),
  noTrace: at('size: 1T\ncache: { l2: 64M }'),
  driverDefault: at(`size: 1T\n${TRACE}`),
  sixteen: at(`size: 1T\ncache: { l2: 64M }\n${TRACE}`, [{ rule: RULE, line: 6, column: 22, messageIncludes: ['64 MiB is 16x the 4 MiB', '60 MiB of it held nothing', 'trace shows only the period'] }]),
  combined: at(`size: 1T\ncache: { total: 64M }\n${TRACE}`, [{ rule: RULE, line: 6, column: 25 }]),
};

ruleTable(RULE, {
  before: () => traces.load(Object.values(cases)),
  after: () => traces.remove(),
  valid: [
    { name: `${MATTSON} a cache of exactly twice the working set`, ...cases.twice },
    { name: 'no trace: nothing is known of the working set', ...cases.noTrace },
    { name: 'the driver default is not a configured cache', ...cases.driverDefault },
  ],
  invalid: [
    { name: `${MATTSON} 64 MiB over a 4 MiB working set, at the L2 value`, ...cases.sixteen },
    { name: 'a combined cache alone, at the combined value', ...cases.combined },
  ],
  fix: { name: 'lowers the L2 cache to the working set, 4 MiB', ...cases.sixteen },
});

sampledTraceTable(RULE, `${SHARDS} a working set estimated from a sample says so`, 'size: 1T\ncache: { l2: 64M }', {
  rule: RULE, line: 6, column: 22, messageIncludes: ['of cache entries the trace touched (estimated from a 25 % sample)'],
});

describe(`rule ${RULE}: the lowered cache`, () => {
  before(() => traces.load(Object.values(cases)));
  it(`${MATTSON} after the fix every lookup but the 64 first touches hits, so l2-cache-undersized is settled too`, () => {
    const report = lintCase(cases.sixteen);
    const fix = findingsOf(report, RULE)[0]?.fix;
    assert.match(fix?.edits[0]?.text ?? '', /^4M$/);
    const disk = report.disks[0];
    assert.equal(disk?.measured?.workingSet, 4n * 1024n * 1024n);
    assert.equal(disk?.measured?.hitRatio, 1 - 64 / 20_000);
  });
});
