// docs/ci.md, run as written: a temporary git repository with a target branch and a change on top
// of it (one disk grown, one undersized cache fixed, one machine moved onto a host that is already
// full), the review script extracted from the page and run as it stands. Checks the markdown, the JSON and the exit status
// (docs/cli.md).
import { strict as assert } from 'node:assert';
import { execFileSync, spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { CONTRACT } from '../helpers/sources';
import { CLI, ROOT } from '../fixtures/lint/run';

const PAGE = fs.readFileSync(path.join(ROOT, 'docs/ci.md'), 'utf8');

/** The first fenced block of `language` after `heading`. */
function block(heading: string, language: string): string {
  const start = PAGE.indexOf(`\n${heading}\n`);
  assert.ok(start !== -1, `docs/ci.md has the heading ${heading}`);
  const found = new RegExp('```' + language + '\\n([\\s\\S]*?)```').exec(PAGE.slice(start));
  assert.ok(found, `a ${language} block under ${heading}`);
  return found[1] as string;
}

const MAPPING = `version: 1
include: ["fleet/*.yaml"]
machines: "$.vms[*]"
disks: "$.volumes[*]"
fields:
  machine: { name: "$.hostname", memory: "$.ram", host: "$.hv" }
  disk: { name: "$.label", size: "$.capacity", l2Cache: "$.tuning.l2", cleanupInterval: "$.tuning.sweep" }
hosts:
  - { name: hv-east-1, memory: 64G }
  - { name: hv-east-2, memory: 48G }
`;

const east = (ledgerL2: string, appRoot: string, webHost: string) => `vms:
  - hostname: tern-db-01
    ram: 32G
    hv: hv-east-1
    volumes:
      - { label: root, capacity: 20G }
      - { label: ledger, capacity: 1T, tuning: { l2: ${ledgerL2}, sweep: 600 } }
  - hostname: gull-app-02
    ram: 8G
    hv: hv-east-1
    volumes:
      - { label: root, capacity: ${appRoot} }
  - hostname: kite-web-03
    ram: 16G
    hv: ${webHost}
    volumes:
      - { label: root, capacity: 20G }
`;

const WEST = `vms:
  - hostname: heron-batch-04
    ram: 40G
    hv: hv-east-2
    volumes:
      - { label: root, capacity: 20G }
`;

const GIT_ENV = { GIT_AUTHOR_NAME: 'fleet', GIT_AUTHOR_EMAIL: 'fleet@example.invalid', GIT_COMMITTER_NAME: 'fleet', GIT_COMMITTER_EMAIL: 'fleet@example.invalid' };

interface ReviewJson {
  findings: { new: { rule: string; severity: string; file: string; host?: string }[]; settled: { rule: string; disk?: string }[]; unchanged: number };
  memory: { machines: { name: string; host?: string; delta: number }[]; hosts: { name: string; before: number; after: number }[] };
  disks: { changed: { machine: string; disk: string; how: string[] }[] };
}

describe('docs/ci.md, run as written', () => {
  let top = '';
  let repo = '';
  let env: NodeJS.ProcessEnv = {};

  before(function () {
    assert.ok(fs.existsSync(CLI), `${CLI} is missing: run "npm run build" first`);
    top = fs.mkdtempSync(path.join(os.tmpdir(), 'cachewright-ci-'));
    // `cachewright` on the PATH, as the page asks: the built command.
    const bin = path.join(top, 'bin');
    fs.mkdirSync(bin);
    fs.writeFileSync(path.join(bin, 'cachewright'), `#!/bin/sh\nexec "${process.execPath}" "${CLI}" "$@"\n`, { mode: 0o755 });
    env = { ...process.env, ...GIT_ENV, PATH: `${bin}${path.delimiter}${process.env.PATH ?? ''}`, CACHEWRIGHT_DEBUG: '' };

    repo = path.join(top, 'fleet-repo');
    const git = (...args: string[]) => execFileSync('git', args, { cwd: repo, env, encoding: 'utf8' });
    fs.mkdirSync(path.join(repo, 'fleet'), { recursive: true });
    fs.mkdirSync(path.join(repo, 'ci'));
    fs.writeFileSync(path.join(repo, 'cachewright.yaml'), MAPPING);
    fs.writeFileSync(path.join(repo, 'fleet/east.yaml'), east('8M', '20G', 'hv-east-1'));
    fs.writeFileSync(path.join(repo, 'fleet/west.yaml'), WEST);
    fs.writeFileSync(path.join(repo, 'ci/cache-review.sh'), block('## The review script', 'sh'));
    git('init', '-q', '-b', 'main');
    git('add', '-A');
    git('commit', '-qm', 'east and west racks as provisioned');
    // The target branch as a CI checkout sees it: origin/main.
    execFileSync('git', ['clone', '-q', '--bare', repo, path.join(top, 'origin.git')], { env });
    git('remote', 'add', 'origin', path.join(top, 'origin.git'));
    git('fetch', '-q', 'origin');
    git('checkout', '-q', '-b', 'rebalance');
    // The change: the ledger's cache covers it now, the app's root disk grows, and the web machine
    // moves to hv-east-2, whose 48 GiB the batch machine's 40 GiB already nearly fill.
    fs.writeFileSync(path.join(repo, 'fleet/east.yaml'), east('128M', '40G', 'hv-east-2'));
    git('commit', '-qam', 'rebalance the east racks');
  });

  after(() => fs.rmSync(top, { recursive: true, force: true }));

  const runShell = (script: string, extra: Record<string, string>) => spawnSync('sh', ['-c', script], { cwd: repo, env: { ...env, ...extra }, encoding: 'utf8' });
  const read = (name: string) => fs.readFileSync(path.join(repo, name), 'utf8');

  it(`${CONTRACT} the review script exits 1 (the change fills a host) and leaves markdown, SARIF and JSON`, () => {
    // The page's own line for running it by hand, as written.
    const byHand = /^BASE_REF=origin\/main sh ci\/cache-review\.sh; echo "exit \$\?"$/m.exec(PAGE)?.[0];
    assert.ok(byHand, 'docs/ci.md shows how to run the script by hand');
    const run = runShell(byHand, {});
    assert.match(run.stdout, /^exit 1$/m, run.stderr);
    const json = JSON.parse(read('cache-review.json')) as ReviewJson;
    assert.deepEqual(json.findings.new.map((f) => `${f.severity} ${f.rule} ${f.host ?? ''}`), ['error host-cache-budget hv-east-2']);
    assert.deepEqual(json.findings.settled.map((f) => `${f.rule} ${f.disk}`), ['l2-cache-undersized ledger']);
    const web = json.memory.machines.find((m) => m.name === 'kite-web-03');
    assert.equal(web?.host, 'hv-east-2');
    const hosts = Object.fromEntries(json.memory.hosts.map((h) => [h.name, h]));
    assert.ok((hosts['hv-east-2']?.after ?? 0) > (hosts['hv-east-2']?.before ?? 0), 'the moved machine\'s caches go to hv-east-2');
    assert.deepEqual(json.disks.changed.map((d) => `${d.machine}/${d.disk} ${d.how.join('+')}`).sort(), ['gull-app-02/root resized', 'tern-db-01/ledger re-tuned']);
    const sarif = JSON.parse(read('cache-review.sarif')) as { version: string; runs: { results: { baselineState?: string }[] }[] };
    assert.equal(sarif.version, '2.1.0');
    assert.ok(sarif.runs[0]?.results.some((r) => r.baselineState === 'new'));
    assert.ok(sarif.runs[0]?.results.some((r) => r.baselineState === 'absent'));
  });

  it(`${CONTRACT} the markdown: a headline with the verdict, the machines whose memory changed, new findings linked by file:line, the rest folded`, () => {
    const markdown = read('cache-review.md');
    const lines = markdown.split('\n');
    assert.match(lines[0] ?? '', /^### /);
    assert.match(markdown, /This change adds 1 error and settles 1 finding, and takes disk cache memory from .+ to .+ \(\+.+\)\./);
    assert.match(markdown, /\*\*this check fails\*\*/);
    assert.match(markdown, /^\| Machine \| Host \| Caches before \| Caches after \| Change \|$/m);
    assert.match(markdown, /^\| tern-db-01 \| hv-east-1 \| .+ \| .+ \| \+.+ \|$/m);
    assert.match(markdown, /^- \*\*error\*\* `host-cache-budget` at \[fleet\/east\.yaml:\d+\]\(fleet\/east\.yaml#L\d+\) \(host hv-east-2\): /m);
    assert.match(markdown, /<details>\n<summary>Settled findings \(1/);
    assert.doesNotMatch(markdown, /[\u{1F300}-\u{1FAFF}\u{2600}-\u{27BF}]/u, 'no emoji');
    assert.doesNotMatch(markdown, /<(img|span|font)\b|style=/, 'no colours or badges');
  });

  it(`${CONTRACT} the work tree is as the change left it: only the three output files are new`, () => {
    const status = execFileSync('git', ['status', '--porcelain'], { cwd: repo, env, encoding: 'utf8' });
    assert.deepEqual(status.trim().split('\n').sort(), ['?? cache-review.json', '?? cache-review.md', '?? cache-review.sarif']);
  });
});
