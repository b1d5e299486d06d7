// l2-cache-undersized: the effective L2 cache must map the whole virtual disk. Expected sizes come
// from [CACHE]'s formula (covered = cache * cluster / entry bytes, full coverage rounded up to whole
// cache entries), docs/sources.md's check table and its worked example, and the driver defaults by
// generation ([CACHE], as docs/sources.md lists them).
import { strict as assert } from 'node:assert';
import { CACHE, COMMON } from '../helpers/sources';
import { findingsOf, lintCase, oneDisk, roundTrip, ruleTable, yaml } from './harness';

const RULE = 'l2-cache-undersized';

ruleTable(RULE, {
  valid: [
    { name: `${CACHE} 20 GiB at 64 KiB needs 2.5 MiB: the current Linux default (up to 32 MiB, never above full coverage) covers it`, text: oneDisk('size: 20G') },
    { name: `${CACHE} check table: 256 GiB at 64 KiB needs exactly 32 MiB, the current Linux default cap`, text: oneDisk('size: 256G') },
    { name: `${CACHE} check table: 1 TiB at 64 KiB with the full 128 MiB`, text: oneDisk('size: 1T\ncache: { l2: 128M }') },
    { name: `${CACHE} check table: 1 TiB at 1 MiB clusters with the full 8 MiB`, text: oneDisk('size: 1T\ncluster: 1M\ncache: { l2: 8M }') },
    { name: `${CACHE} check table: 1 TiB at 2 MiB clusters with the full 4 MiB`, text: oneDisk('size: 1T\ncluster: 2M\ncache: { l2: 4M }') },
    { name: `${CACHE} check table: 1 TiB at 64 KiB with extended (16-byte) entries and the full 256 MiB`, text: oneDisk('size: 1T\nextendedL2: true\ncache: { l2: 256M }') },
    { name: `${CACHE} worked example: 1280 MiB at 64 KiB takes 192 KiB of whole-table cache`, text: oneDisk('size: 1280M\ncache: { l2: 192K }') },
    { name: `${CACHE} worked example with 4 KiB slices: the 160 KiB of entries fill whole slices exactly`, text: oneDisk('size: 1280M\ncache: { l2: 160K, slice: 4K }') },
    { name: `${CACHE} legacy default 1 MiB covers 8 GiB at 64 KiB (check table)`, text: oneDisk('size: 8G'), mapping: { assume: { driver: 'legacy' } } },
    { name: `${CACHE} a combined cache large enough gives the L2 cache full coverage first`, text: oneDisk('size: 1T\ncache: { total: 129M }') },
    { name: 'a raw disk is not sized at all', text: oneDisk('size: 1T\nformat: raw') },
    {
      name: 'JSON: 1 TiB at 64 KiB with 134217728 bytes (128 MiB) of L2 cache',
      text: '{ "machines": [ { "name": "pier-db", "disks": [ { "name": "data", "size": "1T", "cache": { "l2": 134217728 } } ] } ] }\n',
    },
  ],
  invalid: [
    {
      name: `${CACHE} 1 TiB at 64 KiB on the current Linux default: 32 MiB maps 256 GiB (25%), full coverage needs 128 MiB`,
      text: oneDisk('size: 1T'),
      findings: [{ rule: RULE, line: 4, column: 9, messageIncludes: ['driver default', '32 MiB', '256 GiB', '25 %', '128 MiB'] }],
    },
    {
      name: `${CACHE} 1 TiB with 8 MiB configured: reported at the value`,
      text: oneDisk('size: 1T\ncache:\n  l2: 8M'),
      findings: [{ rule: RULE, line: 7, column: 15, messageIncludes: ['8 MiB', '64 GiB', '6.2 %', '128 MiB', '120 MiB more'] }],
    },
    {
      name: `${CACHE} worked example: 1280 MiB at 64 KiB with 128 KiB (two tables) falls short of the 192 KiB (three tables)`,
      text: oneDisk('size: 1280M\ncache: { l2: 128K }'),
      findings: [{ rule: RULE, line: 6, column: 22, messageIncludes: ['192 KiB', '80 %'] }],
    },
    {
      name: `${CACHE} extended L2 doubles the entry: 1 TiB at 64 KiB needs 256 MiB, 128 MiB covers half`,
      text: oneDisk('size: 1T\nextendedL2: true\ncache: { l2: 128M }'),
      findings: [{ rule: RULE, line: 7, column: 22, messageIncludes: ['256 MiB', '50 %'] }],
    },
    {
      name: `${CACHE} legacy driver: the 1 MiB default covers 8 GiB of a 20 GiB disk`,
      text: oneDisk('size: 20G'),
      mapping: { assume: { driver: 'legacy' } },
      findings: [{ rule: RULE, line: 4, column: 9, messageIncludes: ['1 MiB', '8 GiB', '2.5 MiB'] }],
    },
    {
      name: `${CACHE} current driver on a non-Linux host: the default stops at 8 MiB, 256 GiB needs 32 MiB`,
      text: oneDisk('size: 256G'),
      mapping: { assume: { platform: 'other' } },
      findings: [{ rule: RULE, line: 4, column: 9, messageIncludes: ['8 MiB', '64 GiB', '32 MiB'] }],
    },
    {
      name: `${CACHE} a combined cache alone that is too small is reported at the combined value`,
      text: oneDisk('size: 1T\ncache: { total: 64M }'),
      findings: [{ rule: RULE, line: 6, column: 25, messageIncludes: ['combined cache', '128 MiB'] }],
    },
    {
      name: 'JSON: reported at the value, with 1-based line and column',
      text: '{\n  "machines": [\n    { "name": "pier-db", "disks": [\n      { "name": "data", "size": "1T", "cache": { "l2": "8M" } }\n    ] }\n  ]\n}\n',
      findings: [{ rule: RULE, line: 4, column: 56 }],
    },
    {
      name: 'two machines: each undersized disk is reported where it is',
      text: yaml`
        machines:
          - name: pier-db
            disks:
              - { name: a, size: 20G }
              - { name: b, size: 2T }
          - name: pier-web
            disks:
              - { name: c, size: 1T, cache: { l2: 64M } }
      `,
      findings: [
        { rule: RULE, line: 5, column: 9, messageIncludes: '256 MiB' },
        { rule: RULE, line: 8, column: 43, messageIncludes: '50 %' },
      ],
    },
  ],
  fix: { name: 'YAML: the value is replaced by full coverage in the unit style the file uses', text: oneDisk('size: 1T\ncache:\n  l2: 8M   # too small\n  cleanup: 600') },
});

describe(`rule ${RULE}: more fix round trips`, () => {
  it(`${CACHE} with L2 and combined both written, the combined size grows with the L2 cache and keeps the refcount share`, () => {
    const fixed = roundTrip(RULE, { name: 'l2 and combined', text: oneDisk('size: 1T\ncache: { l2: 8M, total: 16M }') });
    assert.ok(fixed.includes('l2: 128M, total: 136M }'), fixed);
  });
  it(`${CACHE} the replacement is the full-coverage value, written like the original (128M for 8M)`, () => {
    const fixed = roundTrip(RULE, { name: 'replace', text: oneDisk('size: 1T\ncache:\n  l2: 8M   # too small') });
    assert.match(fixed, /l2: 128M   # too small/);
  });
  it('a missing key is inserted, creating the missing parent map, in block style', () => {
    const fixed = roundTrip(RULE, { name: 'insert', text: oneDisk('size: 1T   # ledger\nformat: qcow2') });
    assert.ok(fixed.includes('        format: qcow2\n        cache:\n          l2: 128M\n'), fixed);
  });
  it('JSON with a quoted unit keeps the quotes; a plain number of bytes stays a number', () => {
    const quoted = roundTrip(RULE, { name: 'json quoted', text: '{ "machines": [ { "name": "m", "disks": [ { "name": "d", "size": "1T", "cache": { "l2": "8M" } } ] } ] }\n' });
    assert.ok(quoted.includes('"l2": "128M"'), quoted);
    const bytes = roundTrip(RULE, { name: 'json bytes', text: '{ "machines": [ { "name": "m", "disks": [ { "name": "d", "size": 1099511627776, "cache": { "l2": 8388608 } } ] } ] }\n' });
    assert.ok(bytes.includes('"l2": 134217728'), bytes);
  });
  it('the combined cache is raised to full coverage plus the refcount cache (4 clusters by default)', () => {
    const text = oneDisk('size: 1T\ncache: { total: 64M }');
    const finding = findingsOf(lintCase({ text }), RULE)[0];
    assert.ok(finding?.fix);
    // 128 MiB of L2 + 4 x 64 KiB of refcount [CACHE] = 131328 KiB
    assert.equal(finding.fix.edits[0]?.text, '131328K');
    roundTrip(RULE, { name: 'total', text });
  });
  it(`${COMMON} CRLF line endings: the inserted lines use CRLF too`, () => {
    const text = oneDisk('size: 1T').replace(/\n/g, '\r\n');
    const fixed = roundTrip(RULE, { name: 'crlf', text });
    assert.ok(!/[^\r]\n/.test(fixed), JSON.stringify(fixed));
  });
});

describe(`rule ${RULE}: values shared through YAML anchors`, () => {
  const shared = [
    'tuning: &small { l2: 8M }',
    'machines:',
    '  - name: pier-db',
    '    disks:',
    '      - { name: a, size: 1T, cache: *small }',
    '      - { name: b, size: 1T, cache: *small }',
    '',
  ].join('\n');
  it('a finding on a value reached through an alias is reported at the anchor, without a fix (an edit would change every user)', () => {
    const findings = findingsOf(lintCase({ text: shared }), RULE);
    assert.deepEqual(findings.map((f) => [f.range.line, f.range.column]), [[1, 22], [1, 22]]);
    assert.ok(findings.every((f) => f.fix === undefined), 'no fix through an alias');
  });
  it('a disk that is itself an alias gets no inserted key', () => {
    const text = 'template: &disk { name: t, size: 1T }\nmachines:\n  - name: m\n    disks:\n      - *disk\n';
    const findings = findingsOf(lintCase({ text }), RULE);
    assert.equal(findings.length, 1);
    assert.equal(findings[0]?.fix, undefined);
  });
});
