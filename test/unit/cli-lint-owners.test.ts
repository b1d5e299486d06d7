// Which machine and disk each JSON finding of `cachewright lint` belongs to (docs/cli.md "JSON
// output"): the names the engine gave its disks and machines, the same ones SARIF's result
// properties and the known-findings file use, and the finding keys the documented example shows.
import { strict as assert } from 'node:assert';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { CONTRACT } from '../helpers/sources';
import { lintIn, makeWorkspace, removeWorkspace, ROOT, WORKSPACE, type LintJson, type Run } from '../fixtures/lint/run';

const json = (run: Run): LintJson => JSON.parse(run.stdout) as LintJson;
type JsonFinding = LintJson['files'][number]['findings'][number];
const owners = (findings: readonly JsonFinding[]) => findings.map((f) => ({ rule: f.rule, pointer: f.pointer, machine: f.machine, disk: f.disk }));

/** The documented example of `lint --format json` (docs/cli.md), parsed. */
function documentedExample(): LintJson {
  const doc = fs.readFileSync(path.join(ROOT, 'docs', 'cli.md'), 'utf8');
  const section = doc.slice(doc.indexOf('### JSON output'));
  const block = /```json\n([\s\S]*?)```/.exec(section)?.[1];
  assert.ok(block, 'docs/cli.md has a JSON example under "JSON output"');
  return JSON.parse(block) as LintJson;
}

describe('cachewright lint: the machine and disk of a JSON finding', () => {
  it(`${CONTRACT} a disk's finding names its machine and disk, as the file's disks list names them`, async () => {
    const doc = json(await lintIn(WORKSPACE, ['--format', 'json', 'hosts/undersized.yaml']));
    const file = doc.files[0];
    assert.ok(file);
    assert.deepEqual(owners(file.findings), [{ rule: 'l2-cache-undersized', pointer: '/guests/0/drives/0/cache/l2', machine: 'wren-02', disk: 'data' }]);
    assert.deepEqual(file.disks.map((d) => [d.machine, d.name]), [['wren-02', 'data']]);
  });

  it(`${CONTRACT} a machine's own finding has no disk; a finding of the file has neither; a disk without a name is "disk N"`, async () => {
    const dir = makeWorkspace({
      'cachewright.yaml': 'version: 1\ninclude: ["*.yaml"]\nmachines: "$.guests[*]"\ndisks: "$.drives[*]"\nfields:\n  machine: { name: "$.id", memory: "$.mem" }\n  disk: { name: "$.id", size: "$.size", l2Cache: "$.l2" }\n',
      'fleet.yaml': [
        '# cachewright-accept',
        'guests:',
        '  - id: heron-01',
        '    mem: lots',
        '    drives:',
        '      - size: 20G',
        '        l2: 9Q',
        '      - id: no-size',
        '',
      ].join('\n'),
    });
    try {
      const file = json(await lintIn(dir, ['--format', 'json'])).files[0];
      assert.ok(file);
      const byPointer = new Map(owners(file.findings).map((f) => [`${f.rule} ${f.pointer}`, { machine: f.machine, disk: f.disk }]));
      // a machine value that cannot be read: the machine's own
      assert.deepEqual(byPointer.get('invalid-value /guests/0/mem'), { machine: 'heron-01', disk: undefined });
      // a disk value that cannot be read, on a disk without a name: the name its disk gets
      assert.deepEqual(byPointer.get('invalid-value /guests/0/drives/0/l2'), { machine: 'heron-01', disk: 'disk 1' });
      // a disk that cannot be sized still owns what is said about it
      assert.deepEqual(byPointer.get('invalid-value /guests/0/drives/1'), { machine: 'heron-01', disk: 'no-size' });
      // an accept comment without rule or reason: the file's
      assert.deepEqual(byPointer.get('invalid-suppression '), { machine: undefined, disk: undefined });
      for (const finding of file.findings) {
        if (finding.machine === undefined) assert.ok(!('machine' in finding) && !('disk' in finding), 'absent fields are left out, not null');
      }
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} a finding has the keys of the documented example, in its order`, async () => {
    const example = documentedExample().files[0]?.findings[0];
    assert.ok(example);
    const documented = Object.keys(example);
    for (const key of ['machine', 'disk']) assert.ok(documented.includes(key), `the documented finding shows "${key}"`);
    const finding = json(await lintIn(WORKSPACE, ['--format', 'json', 'hosts/undersized.yaml'])).files[0]?.findings[0];
    assert.ok(finding);
    assert.deepEqual(Object.keys(finding), documented);
  });

  it(`${CONTRACT} SARIF result properties and the known-findings file name the same machine and disk`, async () => {
    const dir = makeWorkspace(Object.fromEntries(['cachewright.yaml', 'hosts/undersized.yaml', 'hosts/conflict.json', 'hosts/clean.yaml'].map((name) => [name, fs.readFileSync(path.join(WORKSPACE, name))])));
    try {
      const doc = json(await lintIn(dir, ['--format', 'json']));
      const fromJson = doc.files.flatMap((f) => f.findings.map((x) => `${f.path} ${x.rule} ${x.machine} ${x.disk}`)).sort();
      assert.ok(fromJson.length >= 2);
      const sarif = JSON.parse((await lintIn(dir, ['--format', 'sarif'])).stdout) as {
        runs: { results: { ruleId: string; locations: { physicalLocation: { artifactLocation: { uri: string } } }[]; properties?: { machine?: string; disk?: string } }[] }[];
      };
      const fromSarif = (sarif.runs[0]?.results ?? []).map((r) => `${r.locations[0]?.physicalLocation.artifactLocation.uri} ${r.ruleId} ${r.properties?.machine} ${r.properties?.disk}`).sort();
      assert.deepEqual(fromSarif, fromJson);
      await lintIn(dir, ['--record-known', 'known.json']);
      const known = JSON.parse(fs.readFileSync(path.join(dir, 'known.json'), 'utf8')) as { known: { rule: string; file: string; machine?: string; disk?: string }[] };
      assert.deepEqual(known.known.map((k) => `${k.file} ${k.rule} ${k.machine} ${k.disk}`).sort(), fromJson);
    } finally {
      removeWorkspace(dir);
    }
  });
});
