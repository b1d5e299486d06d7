// A lint thread that dies (out of memory, or any crash) while holding files: each file it held and
// had not finished is an error naming it, the other threads' files are reported as usual, and the
// run ends. Two environment variables reserved for tests make a thread die: a heap limit, and a file
// name at which the thread exits on its own. The built CLI runs in a child process with a timeout.
import { strict as assert } from 'node:assert';
import * as fs from 'node:fs';
import { CONTRACT } from '../helpers/sources';
import { CLI, lintProcess, makeWorkspace, removeWorkspace, STACK_FRAME, type LintJson, type Run } from '../fixtures/lint/run';

const MAPPING = 'version: 1\ninclude: ["vms/*.yaml"]\nmachines: "$.vms[*]"\ndisks: "$.disks[*]"\nfields: { machine: { name: "$.name" }, disk: { size: "$.size" } }\n';

function fleet(count: number): string {
  const machine = (i: number) => `  - name: vm-${i}\n    disks:\n      - { size: 20G }\n`;
  return `vms:\n${Array.from({ length: count }, (_, i) => machine(i)).join('')}`;
}

/** Two threads: the command's own takes a.yaml and c.yaml, the worker b.yaml and d.yaml (interleaved by sorted path). */
function workspace(big = false): string {
  return makeWorkspace({ 'cachewright.yaml': MAPPING, 'vms/a.yaml': fleet(1), 'vms/b.yaml': big ? fleet(60000) : fleet(2), 'vms/c.yaml': fleet(3), 'vms/d.yaml': fleet(4) });
}

function finished(run: Run): void {
  assert.notEqual(run.code, null, `the run was killed: the pool waited for a dead thread (stderr: ${run.stderr})`);
  assert.doesNotMatch(run.stderr, STACK_FRAME);
}

describe('cachewright lint: a lint thread that dies', function () {
  this.timeout(120000);
  before(function () {
    if (!fs.existsSync(CLI)) assert.fail(`${CLI} is missing: run "npm run build" first`);
  });

  it(`${CONTRACT} a thread that stops: its unfinished files are errors (exit 2), the others are linted`, async () => {
    const dir = workspace();
    try {
      const run = await lintProcess(dir, ['--format', 'json'], { timeoutMs: 60000, env: { CACHEWRIGHT_JOBS: '2', CACHEWRIGHT_TEST_THREAD_EXIT_AT: 'b.yaml' } });
      finished(run);
      assert.equal(run.code, 2, run.stderr);
      assert.match(run.stderr, /^vms\/b\.yaml: not linted: the lint thread holding it stopped \(exit 70\)$/m);
      assert.match(run.stderr, /^vms\/d\.yaml: not linted: the lint thread holding it stopped \(exit 70\)$/m);
      const report = JSON.parse(run.stdout) as LintJson;
      assert.deepEqual(report.files.filter((f) => f.disks.length > 0).map((f) => [f.path, f.disks.length]), [['vms/a.yaml', 1], ['vms/c.yaml', 3]]);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} without the injected stop the same run lints all four files on two threads`, async () => {
    const dir = workspace();
    try {
      const run = await lintProcess(dir, ['--format', 'json'], { timeoutMs: 60000, env: { CACHEWRIGHT_JOBS: '2' } });
      finished(run);
      assert.equal(run.code, 0, run.stderr);
      assert.deepEqual((JSON.parse(run.stdout) as LintJson).files.map((f) => f.disks.length), [1, 2, 3, 4]);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} a thread out of memory on a large file: that file and the rest of its share are errors saying so`, async () => {
    const dir = workspace(true);
    try {
      const run = await lintProcess(dir, ['--format', 'json'], { timeoutMs: 90000, env: { CACHEWRIGHT_JOBS: '2', CACHEWRIGHT_TEST_THREAD_HEAP_MB: '64' } });
      finished(run);
      assert.equal(run.code, 2, run.stderr);
      assert.match(run.stderr, /^vms\/b\.yaml: not linted: the lint thread holding it ran out of memory$/m);
      assert.match(run.stderr, /^vms\/d\.yaml: not linted: the lint thread holding it ran out of memory$/m);
      const report = JSON.parse(run.stdout) as LintJson;
      assert.deepEqual(report.files.filter((f) => f.disks.length > 0).map((f) => f.path), ['vms/a.yaml', 'vms/c.yaml']);
    } finally {
      removeWorkspace(dir);
    }
  });
});
