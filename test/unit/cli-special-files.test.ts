// What a hostile repository can put where a file is expected: a named pipe as a definition file, as
// the mapping file or as an image, a socket, a character device, and a qcow2 image on a block
// device. The built CLI runs in a child process with a timeout, so a regression (a read that blocks)
// fails the test instead of hanging the suite.
import { strict as assert } from 'node:assert';
import { execFileSync, spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { CONTRACT } from '../helpers/sources';
import { CLI, cliProcess, makeWorkspace, removeWorkspace, STACK_FRAME, type LintJson, type Run } from '../fixtures/lint/run';
import { writeImage } from '../image/qcow2-writer';

const POSIX = '[POSIX file types, mkfifo(1) / open(2) O_NONBLOCK]';
/** Far longer than any of these runs takes; only a blocked read reaches it. */
const NEVER_BLOCKS = { timeoutMs: 20000 };
const GiB = 1n << 30n;

const MAPPING = 'version: 1\ninclude: ["vms/*.yaml"]\ndisks: "$.drives[*]"\nfields: { disk: { size: "$.size", image: "$.file" } }\n';

function finished(run: Run): void {
  assert.notEqual(run.code, null, `the run was killed after ${NEVER_BLOCKS.timeoutMs} ms: something blocked (stderr: ${run.stderr})`);
  assert.doesNotMatch(run.stderr, STACK_FRAME);
  assert.doesNotMatch(run.stdout, STACK_FRAME);
}

describe('special files never block or crash a run', function () {
  this.timeout(60000);
  let dir: string;
  before(function () {
    if (!fs.existsSync(CLI)) assert.fail(`${CLI} is missing: run "npm run build" first`);
    dir = makeWorkspace({
      'cachewright.yaml': MAPPING,
      'vms/ok.yaml': 'drives:\n  - { size: 20G }\n',
      'vms/on-pipe.yaml': 'drives:\n  - { size: 20G, file: ../images/pipe.qcow2 }\n',
    });
    fs.mkdirSync(path.join(dir, 'images'));
    execFileSync('mkfifo', [path.join(dir, 'images', 'pipe.qcow2'), path.join(dir, 'vms', 'pipe.yaml')]);
  });
  after(() => removeWorkspace(dir));

  it(`${POSIX} ${CONTRACT} lint: a pipe as an image is image-unreadable naming it and its type; a pipe the include globs match is no definition file; the rest is linted`, async () => {
    const run = await cliProcess(dir, ['lint', '--format', 'json'], NEVER_BLOCKS);
    finished(run);
    assert.equal(run.code, 1, run.stderr);
    const report = JSON.parse(run.stdout) as LintJson;
    const onPipe = report.files.find((f) => f.path === 'vms/on-pipe.yaml');
    const finding = onPipe?.findings.find((f) => f.rule === 'image-unreadable');
    assert.equal(finding?.severity, 'error');
    assert.match(finding?.message ?? '', /pipe\.qcow2.*is a named pipe \(FIFO\), not a regular file or block device/);
    assert.ok(report.files.some((f) => f.path === 'vms/ok.yaml' && f.disks.length === 1), 'the other files are linted');
    // The folder walk lists files only: the pipe is not among the definitions.
    assert.deepEqual(report.files.map((f) => f.path), ['vms/ok.yaml', 'vms/on-pipe.yaml']);
  });

  it(`${POSIX} lint: a definition file named on the command line that is a pipe or a character device`, async () => {
    const run = await cliProcess(dir, ['lint', 'vms/pipe.yaml', '/dev/zero'], NEVER_BLOCKS);
    finished(run);
    assert.equal(run.code, 2);
    assert.match(run.stderr, /^vms\/pipe\.yaml: cannot read: is a named pipe \(FIFO\), not a regular file$/m);
    assert.match(run.stderr, /^\/dev\/zero: cannot read: is a character device, not a regular file$/m);
  });

  it(`${POSIX} ${CONTRACT} lint: a pipe as the mapping file is a mapping-file error (exit 2) naming it`, async () => {
    const other = makeWorkspace({ 'vms/ok.yaml': 'drives: []\n' });
    try {
      execFileSync('mkfifo', [path.join(other, 'cachewright.yaml')]);
      const run = await cliProcess(other, ['lint'], NEVER_BLOCKS);
      finished(run);
      assert.equal(run.code, 2);
      assert.match(run.stderr, /^cachewright\.yaml: cannot read the mapping file: is a named pipe \(FIFO\), not a regular file$/m);
    } finally {
      removeWorkspace(other);
    }
  });

  it(`${POSIX} ${CONTRACT} inspect: a pipe and a character device are failed entries naming their type (exit 2)`, async () => {
    const run = await cliProcess(dir, ['inspect', 'images/pipe.qcow2', '/dev/zero', '--format', 'json'], NEVER_BLOCKS);
    finished(run);
    assert.equal(run.code, 2);
    const images = (JSON.parse(run.stdout) as { images: { path: string; error?: string }[] }).images;
    assert.match(images[0]?.error ?? '', /is a named pipe \(FIFO\), not a regular file or block device/);
    assert.match(images[1]?.error ?? '', /is a character device, not a regular file or block device/);
  });

  it(`${POSIX} inspect: a qcow2 image on a block device reads as the same image in a file (loop device; root only)`, async function () {
    const losetup = spawnSync('losetup', ['--version']);
    if (process.getuid?.() !== 0 || losetup.status !== 0) return this.skip();
    const image = path.join(dir, 'images', 'volume.qcow2');
    writeImage(image, { version: 3, clusterBits: 16, virtualSize: 8n * GiB, clusters: [{ guest: 0, kind: 'data' }, { guest: 3, kind: 'data' }] });
    // A loop device ends on a whole 512-byte sector; a logical volume is larger than its image anyway.
    fs.truncateSync(image, Math.ceil(fs.statSync(image).size / 65536) * 65536 + 65536);
    const attached = spawnSync('losetup', ['--find', '--show', '--read-only', image], { encoding: 'utf8' });
    if (attached.status !== 0) return this.skip(); // no loop devices in this container
    const device = attached.stdout.trim();
    try {
      const [fromFile, fromDevice] = await Promise.all([
        cliProcess(dir, ['inspect', image, '--format', 'json'], NEVER_BLOCKS),
        cliProcess(dir, ['inspect', device, '--format', 'json'], NEVER_BLOCKS),
      ]);
      finished(fromDevice);
      assert.equal(fromDevice.code, 0, fromDevice.stdout + fromDevice.stderr);
      const strip = (run: Run) => {
        const { path: _path, ...rest } = (JSON.parse(run.stdout) as { images: Record<string, unknown>[] }).images[0] ?? {};
        return rest;
      };
      assert.deepEqual(strip(fromDevice), strip(fromFile));
    } finally {
      spawnSync('losetup', ['--detach', device]);
    }
  });
});
