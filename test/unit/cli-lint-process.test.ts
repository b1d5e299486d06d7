// `diskwise lint` as CI runs it: the built dist/cli.js in a child process, where the exit status
// is the real one a pipeline sees and stdout carries nothing but the report.
import { strict as assert } from 'node:assert';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { CONTRACT } from '../helpers/sources';
import { BROKEN_MAPPING, CLI, copyWorkspace, lintProcess, removeWorkspace, STACK_FRAME, WORKSPACE, type LintJson } from '../fixtures/lint/run';

describe('diskwise lint in a child process', () => {
  before(function () {
    if (!fs.existsSync(CLI)) assert.fail(`${CLI} is missing: run "npm run build" first`);
  });

  it(`${CONTRACT} exit 0, 1 and 2 reach the shell`, async () => {
    const [clean, findings, usage, mapping, missing] = await Promise.all([
      lintProcess(WORKSPACE, ['hosts/clean.yaml']),
      lintProcess(WORKSPACE, []),
      lintProcess(WORKSPACE, ['--format', 'yaml']),
      lintProcess(BROKEN_MAPPING, []),
      lintProcess(WORKSPACE, ['hosts/absent.json']),
    ]);
    assert.equal(clean.code, 0, clean.stderr);
    assert.equal(findings.code, 1, findings.stderr);
    assert.equal(usage.code, 2);
    assert.equal(mapping.code, 2);
    assert.match(mapping.stderr, /^diskwise\.yaml:8:3: /m);
    assert.equal(missing.code, 2);
    for (const run of [clean, findings, usage, mapping, missing]) {
      assert.doesNotMatch(run.stderr, STACK_FRAME);
      assert.doesNotMatch(run.stdout, STACK_FRAME);
    }
  });

  it(`${CONTRACT} --max-warnings decides the exit status of warnings`, async () => {
    const [over, within] = await Promise.all([
      lintProcess(WORKSPACE, ['hosts/undersized.yaml', '--max-warnings', '0']),
      lintProcess(WORKSPACE, ['hosts/undersized.yaml', '--max-warnings', '1']),
    ]);
    assert.equal(over.code, 1);
    assert.equal(within.code, 0);
  });

  it(`${CONTRACT} JSON and SARIF on stdout parse whole; notes go to stderr`, async () => {
    const [asJson, asSarif] = await Promise.all([
      lintProcess(WORKSPACE, ['--format', 'json', 'hosts', 'hosts/old']),
      lintProcess(WORKSPACE, ['--format', 'sarif']),
    ]);
    const doc = JSON.parse(asJson.stdout) as LintJson;
    assert.equal(doc.summary.files, 5);
    assert.match(asJson.stderr, /hosts\/old: /);
    assert.equal((JSON.parse(asSarif.stdout) as { version: string }).version, '2.1.0');
  });

  it(`${CONTRACT} --fix writes the file and exits by what remains`, async () => {
    const dir = copyWorkspace();
    try {
      const run = await lintProcess(dir, ['--fix', 'hosts/undersized.yaml']);
      assert.equal(run.code, 0, run.stderr);
      assert.match(fs.readFileSync(path.join(dir, 'hosts', 'undersized.yaml'), 'utf8'), /l2: 128M /);
    } finally {
      removeWorkspace(dir);
    }
  });
});
