// A definition file above the size limit is one error finding naming the file, its size and the
// limit; it is never read, so no file a repository holds can exhaust the heap. The rest of the run
// goes on. The limit is lowered here so generated files stay small, and one file of 40 MiB meets the
// default limit in a child process.
import { strict as assert } from 'node:assert';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { CONTRACT, IEC } from '../helpers/sources';
import { CLI, lintIn, lintProcess, makeWorkspace, removeWorkspace, STACK_FRAME, type LintJson } from '../fixtures/lint/run';

const MAPPING = 'version: 1\ninclude: ["vms/*.yaml"]\nmachines: "$.vms[*]"\ndisks: "$.disks[*]"\nfields: { machine: { name: "$.name" }, disk: { size: "$.size" } }\n';

/** `count` small machines: about 60 bytes each. */
function fleet(count: number): string {
  let text = 'vms:\n';
  for (let i = 0; i < count; i++) text += `  - name: vm-${i}\n    disks:\n      - { size: 20G }\n`;
  return text;
}

describe('cachewright lint: the definition file size limit', function () {
  this.timeout(60000);

  it(`${CONTRACT} ${IEC} --file-size-limit: a file above it is one parse-error naming the file, its size and the limit; the others are linted`, async () => {
    const big = fleet(2000);
    const dir = makeWorkspace({ 'cachewright.yaml': MAPPING, 'vms/small.yaml': fleet(2), 'vms/big.yaml': big });
    try {
      const run = await lintIn(dir, ['--format', 'json', '--file-size-limit', '64K']);
      assert.equal(run.code, 1, run.stderr);
      const report = JSON.parse(run.stdout) as LintJson;
      const bigFile = report.files.find((f) => f.path === 'vms/big.yaml');
      assert.equal(bigFile?.findings.length, 1);
      const finding = bigFile?.findings[0];
      assert.equal(finding?.rule, 'parse-error');
      assert.equal(finding?.severity, 'error');
      assert.deepEqual([finding?.line, finding?.column], [1, 1]);
      const bytes = Buffer.byteLength(big);
      assert.ok(bytes > 64 * 1024);
      // 64 KiB = 65536 bytes [IEC 80000-13 binary prefixes]
      assert.match(finding?.message ?? '', new RegExp(`^big\\.yaml is ~?[\\d.]+ KiB \\(${bytes} bytes\\), above the size limit of 64 KiB for definition files, so it is not linted; raise the limit with --file-size-limit SIZE to lint it$`));
      assert.equal(report.files.find((f) => f.path === 'vms/small.yaml')?.disks.length, 2);
      assert.equal(report.summary.errors, 1);

      const raised = await lintIn(dir, ['--format', 'json', '--file-size-limit', '1M']);
      assert.equal((JSON.parse(raised.stdout) as LintJson).files.find((f) => f.path === 'vms/big.yaml')?.disks.length, 2000);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} a file exactly at the limit is linted`, async () => {
    const text = fleet(3);
    const dir = makeWorkspace({ 'cachewright.yaml': MAPPING, 'vms/edge.yaml': text });
    try {
      const run = await lintIn(dir, ['--format', 'json', '--file-size-limit', String(Buffer.byteLength(text))]);
      assert.equal((JSON.parse(run.stdout) as LintJson).files[0]?.disks.length, 3, run.stderr);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} a limit that is no size is a usage error (exit 2)`, async () => {
    const dir = makeWorkspace({ 'cachewright.yaml': MAPPING, 'vms/a.yaml': fleet(1) });
    try {
      for (const bad of ['lots', '0', '-1M', '1T']) {
        const run = await lintIn(dir, ['--file-size-limit', bad]);
        assert.equal(run.code, 2, bad);
        assert.match(run.stderr, /--file-size-limit needs a size from 1 byte to 256 MiB/);
      }
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} a 40 MiB definition under the default limit (32 MiB): one error at once, never a heap abort`, async function () {
    if (!fs.existsSync(CLI)) assert.fail(`${CLI} is missing: run "npm run build" first`);
    const dir = makeWorkspace({ 'cachewright.yaml': MAPPING, 'vms/ok.yaml': fleet(1) });
    try {
      const unit = fleet(1000);
      const file = path.join(dir, 'vms', 'huge.yaml');
      const handle = fs.openSync(file, 'w');
      fs.writeSync(handle, 'vms:\n');
      const body = unit.slice('vms:\n'.length);
      while (fs.fstatSync(handle).size < 40 * 1024 * 1024) fs.writeSync(handle, body);
      fs.closeSync(handle);
      const run = await lintProcess(dir, ['--format', 'json'], { timeoutMs: 30000, env: { NODE_OPTIONS: '--max-old-space-size=256' } });
      assert.equal(run.code, 1, run.stderr);
      assert.doesNotMatch(run.stderr, STACK_FRAME);
      const huge = (JSON.parse(run.stdout) as LintJson).files.find((f) => f.path === 'vms/huge.yaml');
      assert.match(huge?.findings[0]?.message ?? '', /^huge\.yaml is ~?40(\.\d+)? MiB \(\d+ bytes\), above the size limit of 32 MiB/);
    } finally {
      removeWorkspace(dir);
    }
  });
});
