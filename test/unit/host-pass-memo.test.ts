// The editor's host pass remembers what it gave for each host (HostPassMemo): a host whose machines
// are the same objects keeps its findings, and a host judged again with the same outcome keeps its
// earlier objects. Whatever the memo keeps, the pass must give exactly what a pass without one
// gives: checked here over a run of random edits to a generated fleet.
import { strict as assert } from 'node:assert';
import fc from 'fast-check';
import { CONTRACT } from '../helpers/sources';
import { HostPassMemo, lintDocument, lintHosts, loadMapping, runHostPass, type FileReport, type Finding, type Mapping } from '../../src/lint';

const HOSTS = 4;
const MAPPING = `version: 1
include: ["defs/**/*.yaml"]
machines: "$.vms[*]"
disks: "$.volumes[*]"
fields:
  machine: { name: "$.hostname", memory: "$.ram", host: "$.hv" }
  disk: { name: "$.label", size: "$.capacity", l2Cache: "$.tuning.l2" }
assume:
  hostMemory: 64G
hosts:
  - { name: hv-0, memory: 16G }
`;

function mapping(): Mapping {
  const loaded = loadMapping(MAPPING, '/fleet/cachewright.yaml');
  assert.ok(loaded.mapping, loaded.problems.map((p) => p.message).join('; '));
  return loaded.mapping;
}

/** One file's machines: each on a host, with one disk whose L2 cache the edits change. */
interface MachineShape { host: number; ram: number; l2: number }

const text = (machines: readonly MachineShape[], file: number): string =>
  `vms:\n${machines.map((m, i) => `  - hostname: m-${file}-${i}\n    hv: hv-${m.host}\n    ram: ${m.ram}G\n    volumes:\n      - { label: root, capacity: 16T, tuning: { l2: ${m.l2}M } }\n`).join('')}`;

const pathOf = (file: number): string => `/fleet/defs/f${file}.yaml`;

/** A pass as the editor runs it: empty finding lists, the reports left as linted. */
function pass(reports: readonly FileReport[], map: Mapping, memo?: HostPassMemo): { findings: Finding[][]; hosts: unknown; changed: boolean } {
  const workspace = reports.map((report) => ({ path: report.path, machines: report.machines, findings: [] as Finding[] }));
  const result = runHostPass(workspace, map, {}, memo);
  return { findings: workspace.map((f) => f.findings), hosts: result.reports, changed: result.changed };
}

describe('host pass memo', () => {
  const map = mapping();
  const machine = fc.record({ host: fc.integer({ min: 0, max: HOSTS - 1 }), ram: fc.integer({ min: 1, max: 16 }), l2: fc.integer({ min: 1, max: 256 }) });
  const fleet = fc.array(fc.array(machine, { minLength: 1, maxLength: 4 }), { minLength: 2, maxLength: 5 });
  // An edit: file index, and either new machines for it or the same text linted again.
  const edit = fc.record({ file: fc.nat(), machines: fc.option(fc.array(machine, { minLength: 0, maxLength: 4 }), { nil: undefined }) });

  it(`${CONTRACT} gives what a pass without a memo gives, after every edit of a random run`, () => {
    let runs = 0;
    let reused = 0;
    fc.assert(fc.property(fleet, fc.array(edit, { minLength: 1, maxLength: 8 }), (initial, edits) => {
      const shapes = initial.map((m) => [...m]);
      const reports = shapes.map((m, i) => lintDocument({ path: pathOf(i), text: text(m, i) }, map));
      const memo = new HostPassMemo();
      pass(reports, map, memo);
      for (const { file, machines } of edits) {
        const at = file % shapes.length;
        if (machines) shapes[at] = machines;
        // Linted again: new report objects, whether or not the text changed.
        reports[at] = lintDocument({ path: pathOf(at), text: text(shapes[at] ?? [], at) }, map);
        const remembered = pass(reports, map, memo);
        const fresh = pass(reports, map);
        assert.deepEqual(remembered.findings, fresh.findings);
        assert.deepEqual(remembered.hosts, fresh.hosts);
        if (!remembered.changed) reused++;
      }
      runs++;
    }), { numRuns: 60 });
    assert.equal(runs, 60);
    assert.ok(reused > 0, 'some passes found nothing changed');
  });

  it(`${CONTRACT} keeps the very objects of hosts whose machines did not change, and says whether anything did`, () => {
    const files = [
      [{ host: 0, ram: 8, l2: 512 }, { host: 1, ram: 4, l2: 512 }],
      [{ host: 0, ram: 8, l2: 512 }, { host: 1, ram: 4, l2: 512 }],
    ];
    const reports = files.map((m, i) => lintDocument({ path: pathOf(i), text: text(m, i) }, map));
    const memo = new HostPassMemo();
    const first = pass(reports, map, memo);
    assert.equal(first.changed, true, 'the first pass has nothing to compare with');
    const hv0 = first.findings[0]?.find((f) => f.host === 'hv-0');
    assert.ok(hv0, 'hv-0 (16 GiB) is over its 2 % share with 1 GiB of L2 cache');
    // Nothing linted again: nothing judged again.
    const same = pass(reports, map, memo);
    assert.equal(same.changed, false);
    assert.equal(same.findings[0]?.find((f) => f.host === 'hv-0'), hv0);
    // The second file linted again with the same text: judged again, same outcome, same objects.
    reports[1] = lintDocument({ path: pathOf(1), text: text(files[1] ?? [], 1) }, map);
    const relinted = pass(reports, map, memo);
    assert.equal(relinted.changed, false);
    assert.equal(relinted.findings[0]?.find((f) => f.host === 'hv-0'), hv0);
    // A cache raised on hv-1: a change, and hv-0's finding is still the same object.
    reports[1] = lintDocument({ path: pathOf(1), text: text([{ host: 0, ram: 8, l2: 512 }, { host: 1, ram: 4, l2: 1024 }], 1) }, map);
    const raised = pass(reports, map, memo);
    assert.equal(raised.changed, true);
    assert.equal(raised.findings[0]?.find((f) => f.host === 'hv-0')?.message, hv0.message);
    // And the memo never changes what the plain step gives.
    const plain = reports.map((report) => ({ path: report.path, machines: report.machines, findings: [] as Finding[] }));
    lintHosts(plain, map);
    assert.deepEqual(raised.findings, plain.map((f) => f.findings));
  });
  it(`${CONTRACT} counts another mapping as a change, even when no host is left`, () => {
    const reports = [lintDocument({ path: pathOf(0), text: text([{ host: 0, ram: 8, l2: 512 }], 0) }, map)];
    const memo = new HostPassMemo();
    pass(reports, map, memo);
    // The mapping reloaded without the host field: no machine is placed, yet the hosts shown must go.
    const loaded = loadMapping(MAPPING.replace(', host: "$.hv"', ''), '/fleet/cachewright.yaml');
    assert.ok(loaded.mapping);
    const relinted = [lintDocument({ path: pathOf(0), text: text([{ host: 0, ram: 8, l2: 512 }], 0) }, loaded.mapping)];
    const after = pass(relinted, loaded.mapping, memo);
    assert.deepEqual(after.hosts, []);
    assert.equal(after.changed, true);
  });
});
