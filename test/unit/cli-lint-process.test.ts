// `cachewright lint` as CI runs it: the built dist/cli.js in a child process, where the exit status
// is the real one a pipeline sees and stdout carries nothing but the report.
import { strict as assert } from 'node:assert';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { CONTRACT } from '../helpers/sources';
import { threadCount } from '../../src/cli/lint-parallel';
import { BROKEN_MAPPING, CLI, copyWorkspace, lintProcess, makeWorkspace, removeWorkspace, STACK_FRAME, WORKSPACE, type LintJson } from '../fixtures/lint/run';

describe('cachewright lint in a child process', () => {
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
    assert.match(mapping.stderr, /^cachewright\.yaml:8:3: /m);
    assert.equal(missing.code, 2);
    for (const run of [clean, findings, usage, mapping, missing]) {
      assert.doesNotMatch(run.stderr, STACK_FRAME);
      assert.doesNotMatch(run.stdout, STACK_FRAME);
    }
  });

  it(`${CONTRACT} --allow-warnings decides the exit status of warnings`, async () => {
    const [over, within] = await Promise.all([
      lintProcess(WORKSPACE, ['hosts/undersized.yaml', '--allow-warnings', '0']),
      lintProcess(WORKSPACE, ['hosts/undersized.yaml', '--allow-warnings', '1']),
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

  describe('worker threads for large runs', function () {
    this.timeout(120_000);
    // CACHEWRIGHT_JOBS forces threads whatever the file count, so a small workspace exercises them
    const MAPPING = 'version: 1\ninclude: ["defs/*.yaml"]\ndisks: "$.drives[*]"\nfields: { disk: { name: "$.id", size: "$.size", l2Cache: "$.l2" } }\n';
    const SIZES = ['20G', '100G', '1T'];
    const CACHES = ['1M', '2.5M', '8M', '3000K'];
    const workspace = (count: number) => {
      const files: Record<string, string> = { 'cachewright.yaml': MAPPING };
      for (let i = 0; i < count; i++) {
        files[`defs/vm${String(i).padStart(4, '0')}.yaml`] = `drives:\n  - { id: a, size: ${SIZES[i % 3]}, l2: ${CACHES[i % 4]} }\n  - { id: b, size: ${SIZES[(i + 1) % 3]} }\n`;
      }
      files['defs/vm0007.yaml'] = 'drives: [\n';
      return makeWorkspace(files);
    };

    it(`${CONTRACT} the output is the same on one thread and on several`, async () => {
      const dir = workspace(60);
      try {
        for (const format of ['json', 'sarif', 'text']) {
          const one = await lintProcess(dir, ['--format', format], { env: { CACHEWRIGHT_JOBS: '1' } });
          const three = await lintProcess(dir, ['--format', format], { env: { CACHEWRIGHT_JOBS: '3' } });
          assert.equal(one.code, 1);
          assert.equal(three.code, one.code);
          assert.equal(three.stdout, one.stdout, format);
          assert.equal(three.stderr, one.stderr);
        }
      } finally {
        removeWorkspace(dir);
      }
    });

    it(`${CONTRACT} --fix on several threads writes the same files as on one`, async () => {
      const a = workspace(60);
      const b = workspace(60);
      try {
        const one = await lintProcess(a, ['--fix', '--format', 'json'], { env: { CACHEWRIGHT_JOBS: '1' } });
        const three = await lintProcess(b, ['--fix', '--format', 'json'], { env: { CACHEWRIGHT_JOBS: '3' } });
        assert.equal(three.stdout, one.stdout);
        assert.ok(((JSON.parse(one.stdout) as LintJson).summary.fixed ?? 0) > 0);
        for (const name of fs.readdirSync(path.join(a, 'defs'))) {
          assert.equal(fs.readFileSync(path.join(b, 'defs', name), 'utf8'), fs.readFileSync(path.join(a, 'defs', name), 'utf8'), name);
        }
        assert.deepEqual(fs.readdirSync(path.join(b, 'defs')).sort(), fs.readdirSync(path.join(a, 'defs')).sort(), 'no temporary files left');
      } finally {
        removeWorkspace(a);
        removeWorkspace(b);
      }
    });

    it(`${CONTRACT} thread count: one for small runs or when CACHEWRIGHT_JOBS=1, never more than the cores`, () => {
      assert.equal(threadCount(10, {}, 8), 1);
      assert.equal(threadCount(5000, {}, 1), 1);
      assert.equal(threadCount(5000, {}, 2), 2);
      assert.equal(threadCount(5000, { CACHEWRIGHT_JOBS: '1' }, 8), 1);
      assert.equal(threadCount(5000, { CACHEWRIGHT_JOBS: '3' }, 8), 3);
      assert.equal(threadCount(2, { CACHEWRIGHT_JOBS: '4' }, 8), 2);
      assert.equal(threadCount(5000, { CACHEWRIGHT_JOBS: 'lots' }, 2), 2);
    });
  });
});
