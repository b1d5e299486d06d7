// Known findings (CONTRACTS.md §7): identities that survive unrelated edits, the known-findings file,
// `lint --known` / `--record-known`, and SARIF's partialFingerprints and baselineState, validated
// against the SARIF 2.1.0 JSON schema (the copy shipped in @microsoft/jest-sarif, as in
// cli-lint-sarif.test.ts).
import { strict as assert } from 'node:assert';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { loadMapping, lintDocument } from '../../src/lint';
import { identify } from '../../src/review/identity';
import { readKnownFile } from '../../src/review/known';
import { CONTRACT } from '../helpers/sources';
import { SARIF, validateSarif } from '../helpers/sarif';
import { lintIn, makeWorkspace, removeWorkspace, type LintJson } from '../fixtures/lint/run';


const MAPPING = `version: 1
include: ["fleet/**/*.yaml"]
machines: "$.vms[*]"
disks: "$.volumes[*]"
fields:
  machine: { name: "$.hostname", memory: "$.ram" }
  disk: { name: "$.label", size: "$.capacity", l2Cache: "$.tuning.l2" }
`;

const FLEET = `vms:
  - hostname: tern-db-01
    ram: 64G
    volumes:
      - label: root
        capacity: 20G
      - label: data
        capacity: 1T
        tuning: { l2: 8M }
`;

const mapping = (() => {
  const load = loadMapping(MAPPING, '/fleet-repo/cachewright.yaml');
  assert.ok(load.mapping, JSON.stringify(load.problems));
  return load.mapping;
})();

function fingerprints(text: string): string[] {
  const report = lintDocument({ path: '/fleet-repo/fleet/a.yaml', text }, mapping);
  const file = { path: 'fleet/a.yaml', disks: report.disks, machines: report.machines, findings: report.findings };
  return identify([file]).map((i) => `${i.subject.rule} ${i.fingerprint}`).sort();
}

describe('known findings: identity', () => {
  const base = fingerprints(FLEET);

  it(`${CONTRACT} the undersized 1 TiB disk has a finding to follow`, () => {
    assert.ok(base.some((f) => f.startsWith('l2-cache-undersized ')), base.join('\n'));
  });

  it(`${CONTRACT} moving a disk within its machine keeps every identity`, () => {
    const moved = `vms:
  - hostname: tern-db-01
    ram: 64G
    volumes:
      - label: data
        capacity: 1T
        tuning: { l2: 8M }
      - label: root
        capacity: 20G
`;
    assert.deepEqual(fingerprints(moved), base);
  });

  it(`${CONTRACT} adding a machine above and comments in between keeps the old identities`, () => {
    const grown = `# fleet of the east room
vms:
  - hostname: gull-app-02
    ram: 8G
    volumes:
      - label: root
        capacity: 10G
  # the database
  - hostname: tern-db-01
    ram: 64G
    volumes:
      - label: root
        capacity: 20G
      - label: data
        capacity: 1T
        tuning:
          l2: 8M
`;
    const after = fingerprints(grown);
    for (const f of base) assert.ok(after.includes(f), `${f} should survive the edit`);
  });

  it(`${CONTRACT} changing the offending value makes the finding new, though it is still undersized`, () => {
    const changed = fingerprints(FLEET.replace('l2: 8M', 'l2: 16M'));
    const undersized = (list: string[]) => list.filter((f) => f.startsWith('l2-cache-undersized '));
    assert.equal(undersized(changed).length, 1);
    assert.notDeepEqual(undersized(changed), undersized(base));
  });

  it(`${CONTRACT} renaming the disk makes it new; writing 8M as 8M in quotes does not`, () => {
    assert.notDeepEqual(fingerprints(FLEET.replace('label: data', 'label: data2')), base);
    assert.deepEqual(fingerprints(FLEET.replace('l2: 8M', 'l2: "8M"')), base);
  });

  it(`${CONTRACT} without names the JSON Pointer stands in, so identities then follow the index`, () => {
    const unnamed = FLEET.replace('label: root', 'capacity2: 1').replace('label: data', 'kind: x');
    const report = lintDocument({ path: '/fleet-repo/fleet/a.yaml', text: unnamed }, mapping);
    const [item] = identify([{ path: 'fleet/a.yaml', disks: report.disks, machines: report.machines, findings: report.findings }]).filter((i) => i.subject.rule === 'l2-cache-undersized');
    assert.equal(item?.subject.machine, 'tern-db-01');
    assert.equal(item?.subject.disk, '/vms/0/volumes/1');
    assert.equal(item?.subject.field, '/tuning/l2');
  });
});

describe('cachewright lint --record-known / --known', () => {
  let dir = '';
  beforeEach(() => {
    dir = makeWorkspace({ 'cachewright.yaml': MAPPING, 'fleet/a.yaml': FLEET });
  });
  afterEach(() => removeWorkspace(dir));

  it(`${CONTRACT} --record-known writes a sorted file that a second run writes byte for byte the same`, async () => {
    const first = await lintIn(dir, ['--record-known', 'known.json']);
    assert.equal(first.code, 0, first.stderr);
    const text = fs.readFileSync(path.join(dir, 'known.json'), 'utf8');
    const parsed = JSON.parse(text) as { tool: string; known: { rule: string; file: string; machine: string; disk: string; field: string; fingerprint: string }[] };
    assert.equal(parsed.tool, 'cachewright');
    assert.ok(parsed.known.length > 0);
    const undersized = parsed.known.find((k) => k.rule === 'l2-cache-undersized');
    assert.deepEqual({ ...undersized, fingerprint: undefined }, { rule: 'l2-cache-undersized', file: 'fleet/a.yaml', machine: 'tern-db-01', disk: 'data', field: '/tuning/l2', value: '8M', fingerprint: undefined });
    const keys = parsed.known.map((k) => [k.file, k.machine, k.disk, k.rule].join('\u0000'));
    assert.deepEqual(keys, [...keys].sort());
    await lintIn(dir, ['--record-known', 'known.json']);
    assert.equal(fs.readFileSync(path.join(dir, 'known.json'), 'utf8'), text);
  });

  it(`${CONTRACT} with every finding known the run passes; a new one fails it and is marked new`, async () => {
    await lintIn(dir, ['--record-known', 'known.json']);
    const quiet = await lintIn(dir, ['--known', 'known.json', '--format', 'json']);
    assert.equal(quiet.code, 0, quiet.stderr);
    const before = JSON.parse(quiet.stdout) as LintJson;
    assert.ok(before.files[0]?.findings.every((f) => f.baselineState === 'unchanged'));
    assert.equal(before.summary.warnings, 0);
    assert.equal(before.summary.knownGone, 0);

    // A second 1 TiB disk, undersized: new; the old one is untouched.
    fs.appendFileSync(path.join(dir, 'fleet/a.yaml'), '      - label: logs\n        capacity: 1T\n        tuning: { l2: 4M }\n');
    const grown = await lintIn(dir, ['--known', 'known.json', '--format', 'json', '--allow-warnings', '0']);
    assert.equal(grown.code, 1);
    const after = JSON.parse(grown.stdout) as LintJson;
    const states = after.files[0]?.findings.map((f) => `${f.pointer} ${f.baselineState}`);
    assert.ok(states?.includes('/vms/0/volumes/2/tuning/l2 new'), states?.join('\n'));
    assert.ok(states?.includes('/vms/0/volumes/1/tuning/l2 unchanged'), states?.join('\n'));
    assert.equal(after.summary.warnings, 1);
  });

  it(`${CONTRACT} known findings that are gone are counted and named in text output`, async () => {
    await lintIn(dir, ['--record-known', 'known.json']);
    fs.writeFileSync(path.join(dir, 'fleet/a.yaml'), FLEET.replace('l2: 8M', 'l2: 128M'));
    const json = JSON.parse((await lintIn(dir, ['--known', 'known.json', '--format', 'json'])).stdout) as LintJson & { knownGone: { rule: string }[] };
    assert.equal(json.summary.knownGone, 1);
    assert.equal(json.knownGone[0]?.rule, 'l2-cache-undersized');
    const text = await lintIn(dir, ['--known', 'known.json']);
    assert.equal(text.code, 0);
    assert.match(text.stdout, /no longer found/);
    assert.match(text.stdout, /fleet\/a\.yaml {2}l2-cache-undersized {2}tern-db-01 \/ data {2}\/tuning\/l2/);
  });

  it(`${SARIF} results carry partialFingerprints always, and baselineState new / unchanged / absent with --known; the log validates`, async () => {
    const plain = JSON.parse((await lintIn(dir, ['--format', 'sarif'])).stdout) as { runs: { results: { partialFingerprints?: Record<string, string>; baselineState?: string }[] }[] };
    assert.ok(validateSarif(plain), JSON.stringify(validateSarif.errors?.slice(0, 3)));
    const plainResults = plain.runs[0]?.results ?? [];
    assert.ok(plainResults.length > 0);
    for (const result of plainResults) {
      assert.equal(Object.values(result.partialFingerprints ?? {}).length, 1);
      assert.equal(result.baselineState, undefined, 'no baseline without --known');
    }
    await lintIn(dir, ['--record-known', 'known.json']);
    // The known undersized finding goes (its cache now covers the disk) and a new one comes.
    fs.writeFileSync(path.join(dir, 'fleet/a.yaml'), `${FLEET.replace('l2: 8M', 'l2: 128M')}      - label: logs\n        capacity: 1T\n        tuning: { l2: 4M }\n`);
    const log = JSON.parse((await lintIn(dir, ['--format', 'sarif', '--known', 'known.json'])).stdout) as { runs: { results: { ruleId: string; baselineState?: string; partialFingerprints: Record<string, string> }[] }[] };
    assert.ok(validateSarif(log), JSON.stringify(validateSarif.errors?.slice(0, 3)));
    const states = (log.runs[0]?.results ?? []).map((r) => `${r.ruleId} ${r.baselineState}`);
    assert.ok(states.includes('l2-cache-undersized new'), states.join('\n'));
    assert.ok(states.includes('l2-cache-undersized absent'), states.join('\n'));
    assert.ok(states.every((s) => / (new|unchanged|absent)$/.test(s)), states.join('\n'));
  });

  it(`${CONTRACT} a broken or missing known-findings file is exit 2 with the file, line and column`, async () => {
    fs.writeFileSync(path.join(dir, 'known.json'), '{ "tool": "cachewright",\n  "known": [ { "rule": 3 } ] }\n');
    const bad = await lintIn(dir, ['--known', 'known.json']);
    assert.equal(bad.code, 2);
    assert.match(bad.stderr, /^known\.json:2:\d+: not a known-findings file/m);
    const missing = await lintIn(dir, ['--known', 'nope.json']);
    assert.equal(missing.code, 2);
    assert.match(missing.stderr, /nope\.json: cannot read the known-findings file: no such file/);
    assert.equal(readKnownFile('k.json', '{ "tool": "cachewright", "known": [').ok, false);
  });
});
