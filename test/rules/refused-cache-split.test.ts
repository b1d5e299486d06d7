// Cache sizes that contradict each other: an L2 or refcount cache above the combined cache, or all
// three knobs set. The driver refuses such a disk ([CACHE], docs/sources.md), so the split of its
// caches that the sizing rules judge never exists: the contradiction is the disk's one cache-sizing
// finding. One row per rule that judges the split: the same disk written consistently gets that
// rule's finding (the control), written with the contradiction it gets only the contradiction.
import { strict as assert } from 'node:assert';
import { CACHE, MATTSON } from '../helpers/sources';
import { findingsOf, lintCase, oneDisk, type RuleCase } from './harness';
import { TraceFolder } from './traces';

const MiB512 = 512n * 1024n * 1024n;
const traces = new TraceFolder().cycle('traces/cycle64-refused.csv', 64, MiB512, 20_000);
const TRACE = 'io: { trace: traces/cycle64-refused.csv }';

interface Row {
  rule: string;
  source: string;
  /** The disk written consistently: the rule has a finding. */
  control: string;
  /** The same disk with sizes the driver refuses. */
  refused: string;
  /** The one finding the refused disk gets about its cache sizes. */
  contradiction: 'invalid-value' | 'cache-options-conflict';
  traced?: boolean;
}

const ROWS: Row[] = [
  { rule: 'l2-cache-oversized', source: CACHE, control: 'size: 20G\ncache: { l2: 64M }', refused: 'size: 20G\ncache: { l2: 64M, total: 32M }', contradiction: 'invalid-value' },
  { rule: 'l2-cache-oversized', source: CACHE, control: 'size: 20G\ncache: { l2: 64M, total: 96M }', refused: 'size: 20G\ncache: { l2: 64M, refcount: 1M, total: 32M }', contradiction: 'cache-options-conflict' },
  { rule: 'l2-cache-undersized', source: CACHE, control: 'size: 1T\ncache: { l2: 8M }', refused: 'size: 1T\ncache: { l2: 8M, total: 4M }', contradiction: 'invalid-value' },
  { rule: 'l2-cache-undersized', source: CACHE, control: 'size: 1T\ncache: { refcount: 8M, total: 16M }', refused: 'size: 1T\ncache: { refcount: 8M, total: 4M }', contradiction: 'invalid-value' },
  { rule: 'cache-entry-size-suggested', source: CACHE, control: 'size: 1T\ncluster: 512K\ncache: { l2: 8M, cleanup: 600 }', refused: 'size: 1T\ncluster: 512K\ncache: { l2: 8M, total: 4M, cleanup: 600 }', contradiction: 'invalid-value' },
  { rule: 'cleanup-interval-missing', source: CACHE, control: 'size: 1T\ncache: { l2: 64M, cleanup: 0 }', refused: 'size: 1T\ncache: { l2: 64M, total: 32M, cleanup: 0 }', contradiction: 'invalid-value' },
  { rule: 'l2-cache-above-working-set', source: MATTSON, control: `size: 1T\ncache: { l2: 64M }\n${TRACE}`, refused: `size: 1T\ncache: { l2: 64M, total: 32M }\n${TRACE}`, contradiction: 'invalid-value', traced: true },
];

const caseOf = (row: Row, disk: string): Pick<RuleCase, 'text' | 'file' | 'options'> => ({ text: oneDisk(disk), ...(row.traced ? { file: traces.definition, options: traces.options } : {}) });
/** The findings about the disk's cache sizes: every rule but those about the cluster or the file. */
const CACHE_RULES = new Set(['invalid-value', 'cache-options-conflict', 'cache-not-aligned', 'l2-cache-undersized', 'l2-cache-oversized', 'l2-cache-above-working-set', 'cache-entry-size-suggested', 'cleanup-interval-missing']);

describe('cache sizes the driver refuses: only the contradiction is reported', () => {
  before(() => traces.load(ROWS.filter((r) => r.traced).flatMap((r) => [caseOf(r, r.control), caseOf(r, r.refused)])));
  after(() => traces.remove());
  for (const row of ROWS) {
    it(`${row.source} ${row.rule}: ${row.refused.replace(/\n/g, ', ')}`, () => {
      const control = lintCase(caseOf(row, row.control));
      assert.equal(findingsOf(control, row.rule).length, 1, `the control case has a ${row.rule} finding`);
      const refused = lintCase(caseOf(row, row.refused));
      assert.deepEqual(findingsOf(refused, row.rule), [], `no ${row.rule} from a split the driver refuses`);
      assert.deepEqual(refused.findings.filter((f) => CACHE_RULES.has(f.rule)).map((f) => f.rule), [row.contradiction]);
    });
  }
});
