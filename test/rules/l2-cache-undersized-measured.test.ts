// l2-cache-undersized with a measured trace: the measured curve replaces the assumed pattern [MATTSON].
// A cyclic scan over 64 entries (each maps 512 MiB at 64 KiB clusters [SPEC]) hits nothing in a cache
// of fewer than 64 entries and 1 - 64/20000 = 99.68% in one of 64 or more.
import { strict as assert } from 'node:assert';
import { MATTSON, SHARDS } from '../helpers/sources';
import { findingsOf, lintCase, oneDisk, ruleTable, type RuleCase } from './harness';
import { sampledTraceTable, TraceFolder } from './traces';

const RULE = 'l2-cache-undersized';
const traces = new TraceFolder().cycle('traces/cycle64.csv', 64, 512n * 1024n * 1024n, 20_000);
const TRACE = 'io: { trace: traces/cycle64.csv }';
const at = (disk: string, extra: Partial<RuleCase> = {}): Omit<RuleCase, 'name'> => ({ text: oneDisk(disk), file: traces.definition, options: traces.options, ...extra });

const cases = {
  reaches: at(`size: 1T\ncache: { l2: 4M }\n${TRACE}`),
  short: at(`size: 1T\ncache: { l2: 1M }\n${TRACE}`, {
    findings: [{ rule: RULE, line: 6, column: 22, messageIncludes: ['maps 8 GiB of this 1 TiB disk', 'On the measured trace (20,000 requests) it hits 0 %', '4 MiB reaches the 99 % target', 'trace shows only the period'] }],
  }),
  unreachable: at(`size: 1T\ncache: { l2: 1M }\n${TRACE}`, {
    mapping: { assume: { targetHitRatio: '99.9%' } },
    findings: [{ rule: RULE, line: 6, column: 22, messageIncludes: ['no cache reaches 99.9 % on it', '4 MiB holds all 4 MiB it touched'] }],
  }),
  defaultCache: at(`size: 16T\n${TRACE}`),
  withCombined: at(`size: 1T\ncache: { l2: 1M, total: 2M }\n${TRACE}`, {
    findings: [{ rule: RULE, line: 6, column: 22, messageIncludes: ['maps 8 GiB of this 1 TiB disk', '4 MiB reaches the 99 % target'] }],
  }),
};

sampledTraceTable(RULE, `${SHARDS} a sampled measurement says so beside the request count`, 'size: 1T\ncache: { l2: 1M }', {
  rule: RULE, line: 6, column: 22, messageIncludes: ['(20,000 requests, estimated from a 25 % sample)'],
});

ruleTable(RULE, {
  before: () => traces.load(Object.values(cases)),
  after: () => traces.remove(),
  valid: [
    { name: `${MATTSON} 4 MiB holds all 64 entries: the target is reached below full coverage`, ...cases.reaches },
    { name: `${MATTSON} the driver default of a 16 TiB disk (32 MiB, far below its 2 GiB full coverage) holds the whole traced working set`, ...cases.defaultCache },
  ],
  invalid: [
    { name: `${MATTSON} 1 MiB holds 16 of the 64 entries the scan cycles over`, ...cases.short },
    { name: `${MATTSON} a target above what first touches allow`, ...cases.unreachable },
    { name: `${MATTSON} L2 and combined both written: the fix raises both, keeping the refcount share`, ...cases.withCombined },
  ],
  fix: { name: 'sets the measured target, 4 MiB', ...cases.short },
});

describe(`rule ${RULE} with a trace: the fixes and figures`, () => {
  before(() => traces.load(Object.values(cases)));
  it('offers full coverage beside the measured target', () => {
    const [finding] = findingsOf(lintCase(cases.short), RULE);
    assert.match(finding?.fix?.title ?? '', /4 MiB \(reaches 99 % on the measured trace\)/);
    assert.equal(finding?.fix?.edits[0]?.text, '4M');
    assert.equal(finding?.alternatives?.length, 1);
    assert.match(finding?.alternatives?.[0]?.title ?? '', /128 MiB \(full coverage\)/);
    assert.equal(finding?.alternatives?.[0]?.edits[0]?.text, '128M');
  });
  it(`${MATTSON} the disk's measured object: hit ratio at the effective cache, working set, recommendation`, () => {
    const measured = lintCase(cases.short).disks[0]?.measured;
    assert.deepEqual(measured, {
      hitRatio: 0, workingSet: 4n << 20n, recommendedL2Cache: 4n << 20n, sampleRate: 1,
      targetHitRatio: 0.99, targetReached: true, requests: 20_000, lookups: 20_000,
    });
  });
});

describe(`${RULE} with a trace: the curve the sizing panel draws`, () => {
  before(() => traces.load(Object.values(cases)));
  it(`${MATTSON} points from one 64 KiB entry to the 64-entry working set, with the effective and recommended caches: 0 below 64 entries, 1 - 64/20000 from there`, () => {
    const curve = lintCase(cases.short).disks[0]?.measuredCurve;
    assert.ok(curve);
    const sizes = curve.points.map((p) => p.cacheBytes);
    assert.deepEqual(sizes, [...sizes].sort((a, b) => (a < b ? -1 : 1)), 'ascending');
    assert.equal(new Set(sizes).size, sizes.length, 'each size once');
    assert.equal(sizes[0], 64n << 10n, 'the smallest cache: one entry (a whole L2 table)');
    assert.equal(sizes[sizes.length - 1], 4n << 20n, 'the largest: the working set');
    assert.ok(sizes.includes(1n << 20n) && sizes.includes(4n << 20n), 'the effective (1 MiB) and recommended (4 MiB) caches are points');
    // Quarter octaves: 1, 2, 3, 4, 5, 6, 7, 8, 10, 11, 13, 16, ... entries; each doubling has four points or fewer.
    assert.ok(sizes.length >= 20 && sizes.length <= 4 * 6 + 3, `${sizes.length} points`);
    for (const p of curve.points) assert.equal(p.hitRatio, p.cacheBytes < 4n << 20n ? 0 : 1 - 64 / 20_000, `at ${p.cacheBytes}`);
  });
  it('the span runs from the first request\'s offset to the end of the last entry\'s 4 KiB request', () => {
    const curve = lintCase(cases.short).disks[0]?.measuredCurve;
    assert.deepEqual(curve?.span, { start: 0n, end: 63n * (512n << 20n) + 4096n });
  });
});
