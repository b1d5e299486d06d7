// invalid-value: a size, interval or flag that cannot be read or is out of range, reported at the
// value with what was expected. Units follow docs/mapping-file.md and [IEC] (K, Ki, KiB = 2^10; kB =
// 10^3); ranges follow [SPEC] (cluster 512 B..2 MiB, power of two; extended L2 from 16 KiB) and
// [CACHE] (a cache entry size is a power of two from 512 B up to the cluster size).
import { strict as assert } from 'node:assert';
import { CACHE, CONTRACT, IEC, SPEC } from '../helpers/sources';
import { findingsOf, lintCase, oneDisk, ruleTable } from './harness';

const RULE = 'invalid-value';

ruleTable(RULE, {
  valid: [
    { name: `${IEC} 64KiB, 2.5M, "1 GiB" and 1T read as binary sizes`, text: oneDisk('size: 1T\ncluster: 64KiB\ncache: { l2: 2.5M, total: "1 GiB" }') },
    { name: `${IEC} decimal units: 1 GB is 10^9 bytes`, text: oneDisk('size: 1 GB') },
    { name: `${CONTRACT} a plain number is bytes`, text: oneDisk('size: 21474836480\ncluster: 65536') },
    { name: `${CONTRACT} intervals: 90s, 10m, 1h and plain seconds`, text: oneDisk('size: 20G\ncache: { cleanup: 10m }') },
    { name: `${SPEC} the cluster range ends are allowed: 512 B and 2 MiB`, text: 'machines:\n  - name: m\n    disks:\n      - { name: a, size: 1G, cluster: 512 }\n      - { name: b, size: 1G, cluster: 2M }\n' },
    { name: `${SPEC} extended L2 on 16 KiB clusters (subclusters of 512 B)`, text: oneDisk('size: 1G\ncluster: 16K\nextendedL2: true') },
    { name: `${CACHE} a slice of 512 B, and a slice equal to the cluster`, text: 'machines:\n  - name: m\n    disks:\n      - { name: a, size: 1G, cache: { slice: 512 } }\n      - { name: b, size: 1G, cache: { slice: 64K } }\n' },
    {
      name: `${CONTRACT} the five access pattern forms: random, sequential, mixed, zipf(S), "P% on Q%"`,
      text: 'machines:\n  - name: m\n    disks:\n      - { name: a, size: 1G, io: { pattern: random } }\n      - { name: b, size: 1G, io: { pattern: sequential } }\n      - { name: c, size: 1G, io: { pattern: mixed } }\n      - { name: d, size: 1G, io: { pattern: "zipf(1.1)" } }\n      - { name: e, size: 1G, io: { pattern: "90% on 10%" } }\n',
    },
    { name: 'flags read as YAML booleans or the words on/off, yes/no', text: oneDisk('size: 1G\nextendedL2: "off"') },
    { name: 'a raw disk is still read; its values are valid', text: oneDisk('size: 100G\nformat: raw') },
    { name: `${CACHE} an L2 cache inside the combined cache, and one equal to it`, text: 'machines:\n  - name: m\n    disks:\n      - { name: a, size: 20G, cache: { l2: 2M, total: 4M } }\n      - { name: b, size: 20G, cache: { l2: 4M, total: 4M } }\n' },
  ],
  invalid: [
    {
      name: `${CONTRACT} a mapping file without a size selector: each disk says it cannot be sized`,
      text: oneDisk('cache: { l2: 1M }'),
      mapping: { fields: { disk: { size: undefined } } },
      findings: [{ rule: RULE, line: 4, column: 9, messageIncludes: 'disk "data" cannot be sized: the mapping file has no fields.disk.size selector' }],
    },
    {
      name: `${CONTRACT} an unknown unit names the value and the units expected`,
      text: oneDisk('size: 20G\ncache:\n  l2: 12Q'),
      findings: [{ rule: RULE, line: 7, column: 15, messageIncludes: ['l2Cache', '"12Q"', 'unknown unit "Q"', 'powers of 1024'] }],
    },
    {
      name: `${IEC} "KB" is ambiguous between KiB and kB`,
      text: oneDisk('size: 20G\ncache: { refcount: 256 KB }'),
      findings: [{ rule: RULE, line: 6, column: 28, messageIncludes: ['ambiguous', 'KiB', 'kB'] }],
    },
    {
      name: `${CONTRACT} a size that is not a whole number of bytes (0.3K)`,
      text: oneDisk('size: 20G\ncache: { l2: 0.3K }'),
      findings: [{ rule: RULE, line: 6, column: 22, messageIncludes: 'whole number of bytes' }],
    },
    {
      name: `${SPEC} a cluster size that is not a power of two (48K)`,
      text: oneDisk('size: 20G\ncluster: 48K'),
      findings: [{ rule: RULE, line: 6, column: 18, messageIncludes: ['clusterSize', '48 KiB', 'power of two from 512 B to 2 MiB'] }],
    },
    {
      name: `${SPEC} cluster sizes outside 512 B..2 MiB (256 and 4M)`,
      text: 'machines:\n  - name: m\n    disks:\n      - { name: a, size: 1G, cluster: 256 }\n      - { name: b, size: 1G, cluster: 4M }\n',
      findings: [
        { rule: RULE, line: 4, column: 39, messageIncludes: '256 B' },
        { rule: RULE, line: 5, column: 39, messageIncludes: '4 MiB' },
      ],
    },
    {
      name: `${SPEC} extended L2 on 8 KiB clusters`,
      text: oneDisk('size: 20G\ncluster: 8K\nextendedL2: true'),
      findings: [{ rule: RULE, line: 7, column: 21, messageIncludes: ['16 KiB', '8 KiB'] }],
    },
    {
      name: `${CACHE} a slice larger than the cluster`,
      text: oneDisk('size: 20G\ncache: { slice: 128K }'),
      findings: [{ rule: RULE, line: 6, column: 25, messageIncludes: ['128 KiB', 'larger than the cluster (64 KiB)'] }],
    },
    {
      name: `${CACHE} a slice that is not a power of two`,
      text: oneDisk('size: 20G\ncache: { slice: 3K }'),
      findings: [{ rule: RULE, line: 6, column: 25, messageIncludes: 'power of two' }],
    },
    {
      name: `${CONTRACT} an interval with an unknown unit, and a negative one`,
      text: 'machines:\n  - name: m\n    disks:\n      - { name: a, size: 1G, cache: { cleanup: 5d } }\n      - { name: b, size: 1G, cache: { cleanup: -1 } }\n',
      findings: [
        { rule: RULE, line: 4, column: 48, messageIncludes: ['cleanupInterval', '"5d"', 's, m or h'] },
        { rule: RULE, line: 5, column: 48, messageIncludes: '0 turns cleanup off' },
      ],
    },
    {
      name: 'a flag that is neither true nor false',
      text: oneDisk('size: 20G\nextendedL2: maybe'),
      findings: [{ rule: RULE, line: 6, column: 21, messageIncludes: ['true or false', '"maybe"'] }],
    },
    {
      name: 'an access pattern the tool does not know',
      text: oneDisk('size: 20G\nio: { pattern: bursty }'),
      findings: [{ rule: RULE, line: 6, column: 24, messageIncludes: ['pattern', 'bursty'] }],
    },
    {
      name: `${CONTRACT} spellings of other notations (zipf:S, hotspot:P/Q, uniform) name the accepted forms`,
      text: 'machines:\n  - name: m\n    disks:\n      - { name: a, size: 1G, io: { pattern: "zipf:1.1" } }\n      - { name: b, size: 1G, io: { pattern: "hotspot:0.9/0.1" } }\n      - { name: c, size: 1G, io: { pattern: uniform } }\n',
      findings: [
        { rule: RULE, line: 4, column: 45, messageIncludes: ['"zipf:1.1"', 'random, sequential, mixed, zipf(S)', '"P% on Q%"'] },
        { rule: RULE, line: 5, column: 45, messageIncludes: ['"hotspot:0.9/0.1"', 'random, sequential, mixed, zipf(S)', '"P% on Q%"'] },
        { rule: RULE, line: 6, column: 45, messageIncludes: ['"uniform"', 'random, sequential, mixed, zipf(S)', '"P% on Q%"'] },
      ],
    },
    {
      name: 'a guest write size of 0 and a list where a size belongs',
      text: oneDisk('size: 20G\nio: { size: 0 }\ncache: { l2: [1] }'),
      findings: [
        { rule: RULE, line: 6, column: 21, messageIncludes: 'at least 1 byte' },
        { rule: RULE, line: 7, column: 22, messageIncludes: 'got a list' },
      ],
    },
    {
      name: 'the machine\'s memory is read as a size too',
      text: oneDisk('size: 20G', 'memory: lots'),
      findings: [{ rule: RULE, line: 3, column: 13, messageIncludes: ['memory', '"lots"'] }],
    },
    {
      name: 'a disk with no virtual size at all is reported at the disk, naming the selector',
      text: oneDisk('format: qcow2'),
      findings: [{ rule: RULE, line: 4, column: 9, messageIncludes: ['no virtual size', '$.size'] }],
    },
    {
      name: `${CACHE} an L2 cache larger than the combined cache (l2: 64M, combined: 32M) names both values`,
      text: oneDisk('size: 20G\ncache: { l2: 64M, total: 32M }'),
      findings: [{ rule: RULE, line: 6, column: 22, messageIncludes: ['l2Cache 64M (64 MiB)', 'combinedCache 32M (32 MiB)', 'driver refuses'] }],
    },
    {
      name: `${CACHE} a refcount cache larger than the combined cache`,
      text: oneDisk('size: 20G\ncache: { refcount: 8M, total: 4M }'),
      findings: [{ rule: RULE, line: 6, column: 28, messageIncludes: ['refcountCache 8M (8 MiB)', 'combinedCache 4M (4 MiB)'] }],
    },
    {
      name: 'JSON: a bad value inside a one-line object',
      text: '{"machines":[{"name":"m","disks":[{"name":"d","size":"20G","cluster":"48K"}]}]}',
      findings: [{ rule: RULE, line: 1, column: 70 }],
    },
  ],
});

describe(`rule ${RULE}: an unreadable size`, () => {
  it(`${CONTRACT} is reported once, at the value, and no message claims that nothing is there`, () => {
    const findings = findingsOf(lintCase({ text: oneDisk('size: 12Q') }), RULE);
    assert.ok(findings.some((f) => f.pointer === '/machines/0/disks/0/size' && f.range.line === 5 && f.range.column === 15));
    const claims = findings.filter((f) => /nothing at/.test(f.message));
    assert.deepEqual(claims.map((f) => f.message), [], 'the size is written, only unreadable');
  });
  it(`${CONTRACT} a virtual size of 0 is out of range`, () => {
    const findings = findingsOf(lintCase({ text: oneDisk('size: 0') }), RULE);
    assert.ok(findings.some((f) => f.range.line === 5 && f.range.column === 15 && /0 bytes/.test(f.message)));
  });
  it('a broken value does not stop the other disks from being checked', () => {
    const report = lintCase({ text: 'machines:\n  - name: m\n    disks:\n      - { name: a, size: 12Q }\n      - { name: b, size: 1T }\n' });
    assert.ok(findingsOf(report, 'l2-cache-undersized').some((f) => f.range.line === 5));
  });
});
