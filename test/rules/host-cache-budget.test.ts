// host-cache-budget: the caches of all machines on one hypervisor host, across files, against the
// host's cache share (warning) and its memory (error). Per-machine cache memory is the check table
// of docs/sources.md [CACHE]: an 8 GiB disk at 64 KiB clusters takes 1 MiB of L2 for full coverage plus the
// 256 KiB default refcount cache (4 clusters) = 1.25 MiB; a 1 TiB disk with 128 MiB of L2 takes
// 128.25 MiB.
import { strict as assert } from 'node:assert';
import { hostReports, lintDocument, lintHosts, type FileReport } from '../../src/lint';
import { CACHE, COMMON, CONTRACT } from '../helpers/sources';
import { addTextSource, BASE_MAPPING, DEFINITION_DIR, mappingFor, mergeMapping, textsOf, type MappingObject } from './harness';

const RULE = 'host-cache-budget';

interface HostCase {
  name: string;
  /** File name (under DEFINITION_DIR) -> YAML text. */
  files: Record<string, string>;
  mapping?: MappingObject;
  /** Exactly the findings of the rule, as "file:line:column severity". */
  expect: string[];
  messageIncludes?: string[];
}

const HOSTED: MappingObject = {
  fields: { ...(BASE_MAPPING.fields as MappingObject), machine: { name: '$.name', memory: '$.memory', host: '$.host' } },
  hosts: [{ name: 'hv-a', memory: '64G' }],
};

function lintAll(testCase: Pick<HostCase, 'files' | 'mapping'>): { reports: FileReport[]; paths: string[] } {
  const mapping = mappingFor(mergeMapping(HOSTED, testCase.mapping));
  const paths = Object.keys(testCase.files).map((name) => `${DEFINITION_DIR}/${name}`);
  const reports = Object.values(testCase.files).map((text, i) => lintDocument({ path: paths[i] as string, text }, mapping));
  lintHosts(reports.map((r) => ({ path: r.path, machines: r.machines, findings: r.findings })), mapping);
  return { reports, paths };
}

const machine = (name: string, host: string, disk: string, memory?: string) =>
  `  - name: ${name}\n    host: ${host}\n${memory ? `    memory: ${memory}\n` : ''}    disks:\n      - ${disk}\n`;
const file = (...machines: string[]) => `machines:\n${machines.join('')}`;
const SMALL = '{ name: root, size: 8G }';
const BIG = '{ name: data, size: 1T, cache: { l2: 128M } }';

const CASES: { valid: HostCase[]; invalid: HostCase[] } = {
  valid: [
    { name: 'no host field: nothing to sum', files: { 'a.yaml': file(machine('m1', 'hv-a', BIG)) }, mapping: { fields: BASE_MAPPING.fields }, expect: [] },
    { name: 'a host the mapping knows no memory for is not checked', files: { 'a.yaml': file(machine('m1', 'hv-z', BIG, '64G')) }, expect: [] },
    { name: `${CACHE} 128.25 MiB on a 64 GiB host is within 2% (1.28 GiB), and 32 GiB of RAM fits`, files: { 'a.yaml': file(machine('m1', 'hv-a', BIG, '32G')) }, expect: [] },
    {
      name: `${CACHE} exactly at the share is within it: 1.25 MiB against 2% of 62.5 MiB`,
      files: { 'a.yaml': file(machine('m1', 'hv-a', SMALL)) },
      mapping: { hosts: [{ name: 'hv-a', memory: '62.5M' }] },
      expect: [],
    },
    { name: 'rules: off silences it', files: { 'a.yaml': file(machine('m1', 'hv-a', BIG, '64G')) }, mapping: { rules: { [RULE]: 'off' } }, expect: [] },
  ],
  invalid: [
    {
      name: `${CACHE} ${CONTRACT} two files, one host: 256.5 MiB over a 0.25% share of 64 GiB (163.84 MiB), reported once at the first machine's host value`,
      files: { 'a.yaml': file(machine('m1', 'hv-a', BIG)), 'b.yaml': file(machine('m2', 'hv-a', BIG)) },
      mapping: { hosts: [{ name: 'hv-a', memory: '64G', cacheShare: '0.25%' }] },
      expect: ['a.yaml:3:11 warning'],
      messageIncludes: ['2 machines on host hv-a', '256.5 MiB', '0.39 %', '0.25 %'],
    },
    {
      name: `${CACHE} guest RAM 64 GiB plus 128.25 MiB of caches exceed a 64 GiB host: error`,
      files: { 'a.yaml': file(machine('m1', 'hv-a', BIG, '48G'), machine('m2', 'hv-a', SMALL, '16G')) },
      expect: ['a.yaml:3:11 error'],
      messageIncludes: ['guest RAM 64 GiB', '129.5 MiB', 'more than its 64 GiB'],
    },
    {
      name: `${CACHE} RAM known for one machine of two: 64 GiB plus caches exceed the 64 GiB host, and the text says whose RAM it counts`,
      files: { 'a.yaml': file(machine('m1', 'hv-a', BIG, '64G'), machine('m2', 'hv-a', SMALL)) },
      expect: ['a.yaml:3:11 error'],
      messageIncludes: ['guest RAM 64 GiB (RAM known for 1 of them) plus disk caches 129.5 MiB'],
    },
    {
      name: `${COMMON} assume.hostMemory stands in for hosts the list does not name; budget.hostCacheShareOfMemory sets the share`,
      files: { 'a.yaml': file(machine('m1', 'hv-q', BIG)) },
      mapping: { assume: { hostMemory: '4G' }, budget: { hostCacheShareOfMemory: 0.02 } },
      expect: ['a.yaml:3:11 warning'],
      messageIncludes: ['assume.hostMemory', 'share is 2 %'],
    },
    {
      name: `${COMMON} a shared backing image counts once per VM that opens it (each open disk has its own caches)`,
      files: {
        'a.yaml': file(machine('m1', 'hv-a', '{ name: root, size: 1T, cache: { l2: 128M }, backing: { name: golden, size: 1T, cache: { l2: 128M } } }')),
        'b.yaml': file(machine('m2', 'hv-a', '{ name: root, size: 1T, cache: { l2: 128M }, backing: { name: golden, size: 1T, cache: { l2: 128M } } }')),
      },
      mapping: { hosts: [{ name: 'hv-a', memory: '64G', cacheShare: 0.005 }] },
      expect: ['a.yaml:3:11 warning'],
      // 2 VMs x (overlay 128.25 MiB + backing 128.25 MiB) = 513 MiB, not 384.75 MiB.
      messageIncludes: ['513 MiB'],
    },
    {
      name: 'a severity in the mapping file wins over the rule\'s own',
      files: { 'a.yaml': file(machine('m1', 'hv-a', BIG)) },
      mapping: { hosts: [{ name: 'hv-a', memory: '1G' }], rules: { [RULE]: 'info' } },
      expect: ['a.yaml:3:11 info'],
    },
  ],
};

addTextSource(RULE, {
  produce: () => {
    const found = [...CASES.valid, ...CASES.invalid].map((c) => textsOf(lintAll(c).reports.flatMap((r) => r.findings.filter((f) => f.rule === RULE))));
    return { messages: found.flatMap((t) => t.messages), others: found.flatMap((t) => t.others) };
  },
});

describe(`rule ${RULE}`, () => {
  for (const [kind, cases] of Object.entries(CASES)) {
    describe(kind, () => {
      for (const testCase of cases) {
        it(testCase.name, () => {
          const { reports } = lintAll(testCase);
          const found = reports.flatMap((r) => r.findings.filter((f) => f.rule === RULE).map((f) => ({ place: `${r.path.slice(DEFINITION_DIR.length + 1)}:${f.range.line}:${f.range.column} ${f.severity}`, message: f.message })));
          assert.deepEqual(found.map((f) => f.place), testCase.expect, found.map((f) => f.message).join('\n'));
          for (const fragment of testCase.messageIncludes ?? []) assert.ok(found[0]?.message.includes(fragment), `${JSON.stringify(found[0]?.message)} should mention ${fragment}`);
        });
      }
    });
  }

  it(`${CONTRACT} every machine on the host is a related place, with its own file`, () => {
    const { reports, paths } = lintAll({
      files: { 'a.yaml': file(machine('m1', 'hv-a', BIG, '40G')), 'b.yaml': file(machine('m2', 'hv-b', SMALL), machine('m3', 'hv-a', SMALL, '30G')) },
      mapping: { hosts: [{ name: 'hv-a', memory: '64G' }, { name: 'hv-b', memory: '64G' }] },
    });
    const finding = reports[0]?.findings.find((f) => f.rule === RULE);
    assert.ok(finding);
    assert.equal(finding.host, 'hv-a');
    assert.equal(finding.pointer, '/machines/0/host');
    assert.deepEqual(finding.related?.map((r) => [r.message, r.file ?? 'same file', r.range.line]), [
      ['m1: 40 GiB RAM, 128.25 MiB of disk caches', 'same file', 2],
      ['m3: 30 GiB RAM, 1.25 MiB of disk caches', paths[1], 6],
    ]);
    assert.equal(reports[1]?.findings.filter((f) => f.rule === RULE).length, 0, 'once per host');
  });

  it(`${CONTRACT} the mapping file's accept list accepts it at the first machine's host value`, () => {
    const { reports } = lintAll({
      files: { 'a.yaml': file(machine('m1', 'hv-a', BIG, '64G')) },
      mapping: { accept: [{ rule: RULE, pointer: '/machines/0', file: 'fleet/a.yaml', reason: 'host gets more memory next quarter' }] },
    });
    assert.deepEqual(reports[0]?.findings.find((f) => f.rule === RULE)?.accepted, { reason: 'host gets more memory next quarter', from: 'mapping' });
  });

  it(`${CONTRACT} an accept comment on the first machine's host line accepts it (at the end of the line or above it)`, () => {
    const trailing = 'machines:\n  - name: m1\n    host: hv-a  # cachewright-accept host-cache-budget: moves to a larger host in May\n    memory: 64G\n    disks:\n      - ' + BIG + '\n';
    const above = 'machines:\n  - name: m1\n    # cachewright-accept host-cache-budget: moves to a larger host in May\n    host: hv-a\n    memory: 64G\n    disks:\n      - ' + BIG + '\n';
    for (const text of [trailing, above]) {
      const { reports } = lintAll({ files: { 'a.yaml': text } });
      const findings = reports[0]?.findings ?? [];
      assert.deepEqual(findings.find((f) => f.rule === RULE)?.accepted, { reason: 'moves to a larger host in May', from: 'comment' }, text);
      assert.equal(findings.filter((f) => f.rule === 'invalid-suppression').length, 0, 'the comment is in a place that accepts something');
    }
    // On a machine that is not the first on the host, it accepts nothing: the finding is not there.
    const { reports } = lintAll({ files: { 'a.yaml': file(machine('m1', 'hv-a', BIG, '40G')), 'b.yaml': trailing.replace('name: m1', 'name: m2').replace('64G', '30G') } });
    assert.equal(reports[0]?.findings.find((f) => f.rule === RULE)?.accepted, undefined);
  });

  it(`${CACHE} the host reports the editor shows hold the numbers the rule judges`, () => {
    const { reports } = lintAll({
      files: { 'a.yaml': file(machine('m1', 'hv-a', BIG, '40G')), 'b.yaml': file(machine('m2', 'hv-b', SMALL), machine('m3', 'hv-a', SMALL, '30G')) },
      mapping: { hosts: [{ name: 'hv-a', memory: '64G' }] },
    });
    const hosts = hostReports(reports.map((r) => ({ path: r.path, machines: r.machines })), mappingFor(mergeMapping(HOSTED, { hosts: [{ name: 'hv-a', memory: '64G' }] })));
    assert.deepEqual(hosts.map((h) => [h.name, h.machines.map((m) => m.name).join(' '), h.budget?.memory]), [['hv-a', 'm1 m3', 64n << 30n], ['hv-b', 'm2', undefined]]);
    const [a, b] = hosts;
    // 128.25 MiB + 1.25 MiB of caches; 40 + 30 GiB of RAM; 2 % of 64 GiB = 1,374,389,534 bytes (rounded down).
    assert.deepEqual(a?.load, { caches: 129n * 2n ** 20n + 2n ** 19n, guestMemory: 70n << 30n, withMemory: 2, allowed: ((64n << 30n) * 20_000n) / 1_000_000n, needed: (70n << 30n) + 129n * 2n ** 20n + 2n ** 19n });
    assert.deepEqual(b?.load, { caches: 5n * 2n ** 18n, guestMemory: 0n, withMemory: 0, needed: 5n * 2n ** 18n });
  });
});
