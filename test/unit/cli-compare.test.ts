// `cachewright compare` (CONTRACTS.md §8): two folders, or a git revision read without touching the
// work tree; findings new / settled / unchanged, memory per machine and host, disks added, removed
// and changed; exit status; SARIF baselineState validated against the SARIF 2.1.0 JSON schema
// (the copy in @microsoft/jest-sarif, checked with ajv as in cli-lint-sarif.test.ts).
import { strict as assert } from 'node:assert';
import { execFileSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { runCommand } from '../../src/cli/main';
import { CONTRACT } from '../helpers/sources';
import { SARIF, validateSarif } from '../helpers/sarif';
import { makeWorkspace, removeWorkspace, type Run } from '../fixtures/lint/run';


async function compareIn(cwd: string, args: readonly string[]): Promise<Run> {
  let stdout = '';
  let stderr = '';
  const code = await runCommand(['compare', ...args], { stdout: (t) => void (stdout += t), stderr: (t) => void (stderr += t), cwd, stderrIsTTY: false });
  return { code, stdout, stderr };
}

const MAPPING = `version: 1
include: ["fleet/**/*.yaml"]
machines: "$.vms[*]"
disks: "$.volumes[*]"
fields:
  machine: { name: "$.hostname", memory: "$.ram", host: "$.hv" }
  disk: { name: "$.label", size: "$.capacity", l2Cache: "$.tuning.l2" }
hosts:
  - { name: hv-01, memory: 256G }
`;

const BASE = `vms:
  - hostname: tern-db-01
    ram: 64G
    hv: hv-01
    volumes:
      - label: root
        capacity: 20G
      - label: data
        capacity: 1T
        tuning: { l2: 8M }
  - hostname: gull-app-02
    ram: 8G
    hv: hv-01
    volumes:
      - label: root
        capacity: 10G
`;

// data gets full coverage (settles its finding, grows the caches); a new 2 TiB disk is undersized;
// gull-app-02's root disk is gone and a scratch disk came.
const HEAD = `vms:
  - hostname: tern-db-01
    ram: 64G
    hv: hv-01
    volumes:
      - label: root
        capacity: 40G
      - label: data
        capacity: 1T
        tuning: { l2: 128M }
      - label: archive
        capacity: 2T
        tuning: { l2: 8M }
  - hostname: gull-app-02
    ram: 8G
    hv: hv-01
    volumes:
      - label: scratch
        capacity: 10G
`;

interface CompareJson {
  findings: { new: { rule: string; severity: string; file: string; machine?: string; disk?: string; line: number }[]; settled: { rule: string; disk?: string; line: number }[]; unchanged: number };
  memory: { machines: { name: string; host?: string; before: number; after: number; delta: number }[]; hosts: { name: string; memory?: number; before: number; after: number; delta: number }[]; total: { before: number; after: number; delta: number } };
  disks: { added: { disk: string }[]; removed: { disk: string }[]; changed: { disk: string; how: string[] }[] };
}

describe('cachewright compare', () => {
  let dir = '';
  beforeEach(() => {
    dir = makeWorkspace({ 'base/cachewright.yaml': MAPPING, 'base/fleet/a.yaml': BASE, 'head/cachewright.yaml': MAPPING, 'head/fleet/a.yaml': HEAD });
  });
  afterEach(() => removeWorkspace(dir));

  it(`${CONTRACT} JSON: new, settled and unchanged findings; memory per machine, host and in all; disks added, removed, changed`, async () => {
    const run = await compareIn(dir, ['base', 'head', '--format', 'json']);
    assert.equal(run.code, 0, run.stderr);
    const json = JSON.parse(run.stdout) as CompareJson;
    assert.deepEqual(json.findings.new.map((f) => `${f.rule} ${f.machine}/${f.disk} line ${f.line}`), ['l2-cache-undersized tern-db-01/archive line 13']);
    assert.deepEqual(json.findings.settled.map((f) => `${f.rule} ${f.disk} line ${f.line}`), ['l2-cache-undersized data line 10']);
    const db = json.memory.machines.find((m) => m.name === 'tern-db-01');
    assert.ok(db && db.host === 'hv-01' && db.delta === db.after - db.before && db.delta > 0);
    const host = json.memory.hosts.find((h) => h.name === 'hv-01');
    assert.equal(host?.memory, 256 * 2 ** 30);
    assert.equal(host?.after, json.memory.machines.reduce((sum, m) => sum + m.after, 0));
    assert.equal(json.memory.total.delta, json.memory.total.after - json.memory.total.before);
    assert.deepEqual(json.disks.added.map((d) => d.disk).sort(), ['archive', 'scratch']);
    assert.deepEqual(json.disks.removed.map((d) => d.disk), ['root']);
    const changed = Object.fromEntries(json.disks.changed.map((d) => [d.disk, d.how.join(',')]));
    assert.deepEqual(changed, { root: 'resized', data: 're-tuned' });
  });

  it(`${CONTRACT} exit 1 only for added errors or warnings beyond --allow-warnings`, async () => {
    assert.equal((await compareIn(dir, ['base', 'head', '--allow-warnings', '1'])).code, 0);
    const strict = await compareIn(dir, ['base', 'head', '--allow-warnings', '0']);
    assert.equal(strict.code, 1);
    assert.match(strict.stderr, /adds 1 warnings?, more than --allow-warnings 0/);
    // The reverse change settles the new finding and brings the old one back: one new warning.
    assert.equal((await compareIn(dir, ['head', 'base', '--allow-warnings', '0'])).code, 1);
    assert.equal((await compareIn(dir, ['base', 'base', '--allow-warnings', '0'])).code, 0);
  });

  it(`${CONTRACT} usage and I/O problems are exit 2 with a message`, async () => {
    assert.equal((await compareIn(dir, ['base'])).code, 2);
    const missing = await compareIn(dir, ['base', 'nowhere']);
    assert.equal(missing.code, 2);
    assert.match(missing.stderr, /nowhere is not a folder/);
    const format = await compareIn(dir, ['base', 'head', '--format', 'html']);
    assert.equal(format.code, 2);
    const notGit = await compareIn(dir, ['--git', 'HEAD', 'head']);
    assert.equal(notGit.code, 2);
    assert.match(notGit.stderr, /not inside a git repository/);
  });

  it(`${SARIF} head's findings with baselineState against base (settled ones absent); the log validates`, async () => {
    const run = await compareIn(dir, ['base', 'head', '--format', 'sarif']);
    const log = JSON.parse(run.stdout) as { runs: { results: { ruleId: string; baselineState: string }[] }[] };
    assert.ok(validateSarif(log), JSON.stringify(validateSarif.errors?.slice(0, 3)));
    const states = (log.runs[0]?.results ?? []).map((r) => r.baselineState).sort();
    assert.deepEqual([...new Set(states)].sort(), ['absent', 'new']);
  });

  it(`${CONTRACT} --git REF reads the base from the revision and leaves the work tree, index and HEAD alone`, async () => {
    const repo = path.join(dir, 'base');
    const git = (...args: string[]) => execFileSync('git', args, { cwd: repo, encoding: 'utf8', env: { ...process.env, GIT_AUTHOR_NAME: 'fleet', GIT_AUTHOR_EMAIL: 'fleet@example.invalid', GIT_COMMITTER_NAME: 'fleet', GIT_COMMITTER_EMAIL: 'fleet@example.invalid' } });
    git('init', '-q', '-b', 'main');
    git('add', '-A');
    git('commit', '-qm', 'fleet as provisioned');
    fs.writeFileSync(path.join(repo, 'fleet/a.yaml'), HEAD);
    const head = git('rev-parse', 'HEAD');
    const status = git('status', '--porcelain');
    const run = await compareIn(repo, ['--git', 'main', '--format', 'json']);
    assert.equal(run.code, 0, run.stderr);
    const json = JSON.parse(run.stdout) as CompareJson;
    assert.equal(json.findings.new.length, 1);
    assert.equal(json.findings.settled.length, 1);
    assert.equal(git('rev-parse', 'HEAD'), head);
    assert.equal(git('status', '--porcelain'), status);
    assert.equal(fs.readFileSync(path.join(repo, 'fleet/a.yaml'), 'utf8'), HEAD);
    const unknown = await compareIn(repo, ['--git', 'no-such-branch']);
    assert.equal(unknown.code, 2);
    assert.match(unknown.stderr, /"no-such-branch" names no commit/);
  });
});
