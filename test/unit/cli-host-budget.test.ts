// host-cache-budget through `cachewright lint`: summed across the files of one run and shown in
// text, JSON and SARIF with related places in other files. The SARIF log is validated against the
// SARIF 2.1.0 JSON schema shipped in @microsoft/jest-sarif (as in cli-lint-sarif.test.ts).
import { strict as assert } from 'node:assert';
import { CONTRACT } from '../helpers/sources';
import { SARIF, validateSarif } from '../helpers/sarif';
import { lintIn, makeWorkspace, removeWorkspace } from '../fixtures/lint/run';


const MAPPING = `version: 1
include: ["fleet/*.yaml"]
machines: "$.vms[*]"
disks: "$.volumes[*]"
fields:
  machine: { name: "$.hostname", memory: "$.ram", host: "$.placement.hv" }
  disk: { name: "$.label", size: "$.capacity", l2Cache: "$.tuning.l2" }
hosts:
  - { name: hv-07, memory: 96G }
`;
const vm = (name: string, ram: string) => `  - hostname: ${name}\n    ram: ${ram}\n    placement: { hv: hv-07 }\n    volumes:\n      - { label: data, capacity: 1T, tuning: { l2: 128M } }\n`;

describe('cachewright lint: host-cache-budget across files', () => {
  let dir = '';
  before(() => {
    dir = makeWorkspace({ 'cachewright.yaml': MAPPING, 'fleet/a.yaml': `vms:\n${vm('tern-db-01', '64G')}`, 'fleet/b.yaml': `vms:\n${vm('tern-db-02', '32G')}` });
  });
  after(() => removeWorkspace(dir));

  it(`${CONTRACT} text: one error for the host at the first machine, each machine a "see" line with its own file`, async () => {
    const run = await lintIn(dir, []);
    assert.equal(run.code, 1);
    assert.match(run.stdout, /^fleet\/a\.yaml:4:22 +error +host-cache-budget +host hv-07 cannot hold its 2 machines/m);
    assert.match(run.stdout, /see fleet\/a\.yaml:2:5: tern-db-01: 64 GiB RAM/);
    assert.match(run.stdout, /see fleet\/b\.yaml:2:5: tern-db-02: 32 GiB RAM/);
    assert.equal(run.stdout.match(/host-cache-budget/g)?.length, 1);
  });

  it(`${CONTRACT} JSON: related places carry the other file's path`, async () => {
    const json = JSON.parse((await lintIn(dir, ['--format', 'json'])).stdout) as { files: { path: string; findings: { rule: string; related?: { file?: string; line: number }[] }[] }[] };
    const finding = json.files.find((f) => f.path === 'fleet/a.yaml')?.findings.find((f) => f.rule === 'host-cache-budget');
    assert.deepEqual(finding?.related?.map((r) => `${r.file ?? 'same'}:${r.line}`), ['same:2', 'fleet/b.yaml:2']);
  });

  it(`${SARIF} related locations point into each machine's own file; the log validates`, async () => {
    const log = JSON.parse((await lintIn(dir, ['--format', 'sarif'])).stdout) as { runs: { results: { ruleId: string; relatedLocations?: { physicalLocation: { artifactLocation: { uri: string } } }[] }[] }[] };
    assert.ok(validateSarif(log), JSON.stringify(validateSarif.errors?.slice(0, 3)));
    const result = log.runs[0]?.results.find((r) => r.ruleId === 'host-cache-budget');
    assert.deepEqual(result?.relatedLocations?.map((l) => l.physicalLocation.artifactLocation.uri), ['fleet/a.yaml', 'fleet/b.yaml']);
  });

  it(`${CONTRACT} linting one file alone sums only what was linted`, async () => {
    const run = await lintIn(dir, ['fleet/b.yaml']);
    assert.doesNotMatch(run.stdout, /host-cache-budget/);
  });
});
