// Opening files out of a repository: the type decision, the non-blocking checked open, the size
// limit and the size probe for block devices. Special files are real ones made here (mkfifo, a
// listening Unix socket, /dev/null); nothing below may block, so a regression shows as a hung test
// process: the FIFO cases run the reader in a child process with a timeout.
import { strict as assert } from 'node:assert';
import { execFileSync, spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as net from 'node:net';
import * as os from 'node:os';
import * as path from 'node:path';
import fc from 'fast-check';
import { blockDeviceSize, fileKind, FileReadError, readRegularFile, refusedKind, sizeByProbing, type StatKind } from '../../src/files/open';
import { COMMON } from '../helpers/sources';

const POSIX = '[POSIX file types, stat(2) / open(2) O_NONBLOCK]';

function statOf(kind: keyof StatKind): StatKind {
  const is = (name: keyof StatKind) => () => name === kind;
  return {
    isFile: is('isFile'),
    isDirectory: is('isDirectory'),
    isFIFO: is('isFIFO'),
    isSocket: is('isSocket'),
    isCharacterDevice: is('isCharacterDevice'),
    isBlockDevice: is('isBlockDevice'),
    isSymbolicLink: is('isSymbolicLink'),
  };
}

function readError(run: () => unknown): FileReadError {
  try {
    run();
  } catch (error) {
    assert.ok(error instanceof FileReadError, `a FileReadError, not ${String(error)}`);
    return error;
  }
  return assert.fail('expected a FileReadError');
}

describe('files: opening what a repository names', () => {
  let dir: string;
  before(() => {
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cachewright-files-'));
  });
  after(() => fs.rmSync(dir, { recursive: true, force: true }));

  describe('the type decision', () => {
    const table: Array<[keyof StatKind, string, string | undefined, string | undefined]> = [
      ['isFile', 'regular file', undefined, undefined],
      ['isDirectory', 'directory', 'is a directory, not a regular file', 'is a directory, not a regular file or block device'],
      ['isFIFO', 'named pipe (FIFO)', 'is a named pipe (FIFO), not a regular file', 'is a named pipe (FIFO), not a regular file or block device'],
      ['isSocket', 'socket', 'is a socket, not a regular file', 'is a socket, not a regular file or block device'],
      ['isCharacterDevice', 'character device', 'is a character device, not a regular file', 'is a character device, not a regular file or block device'],
      ['isBlockDevice', 'block device', 'is a block device, not a regular file', undefined],
    ];
    for (const [probe, kind, asText, asImage] of table) {
      it(`${POSIX} ${kind}: text files ${asText ? 'refuse' : 'read'} it, images ${asImage ? 'refuse' : 'read'} it`, () => {
        assert.equal(fileKind(statOf(probe)), kind);
        assert.equal(refusedKind(statOf(probe)), asText);
        assert.equal(refusedKind(statOf(probe), { blockDevices: true }), asImage);
      });
    }
  });

  describe('real special files are refused at once, never opened for a blocking read', () => {
    it(`${POSIX} a named pipe made with mkfifo (in a child process, so a block cannot hang the suite)`, function () {
      const fifo = path.join(dir, 'pipe.yaml');
      execFileSync('mkfifo', [fifo]);
      const script = `const { readRegularFile } = require(${JSON.stringify(path.resolve(__dirname, '../../src/files/open.ts'))});
        try { readRegularFile(${JSON.stringify(fifo)}); console.log('read'); } catch (e) { console.log(e.reason + ': ' + e.message); }`;
      const child = spawnSync(process.execPath, ['--require', 'tsx/cjs', '-e', script], { encoding: 'utf8', timeout: 15000, cwd: path.resolve(__dirname, '../..') });
      assert.equal(child.signal, null, 'the reader blocked on the pipe');
      assert.equal(child.stdout.trim(), 'kind: is a named pipe (FIFO), not a regular file', child.stderr);
    });

    it(`${POSIX} a listening Unix socket`, async () => {
      const socket = path.join(dir, 'control.json');
      const server = net.createServer();
      await new Promise<void>((resolve) => server.listen(socket, resolve));
      try {
        const error = readError(() => readRegularFile(socket));
        assert.equal(error.reason, 'kind');
        assert.equal(error.message, 'is a socket, not a regular file');
      } finally {
        await new Promise((resolve) => server.close(resolve));
      }
    });

    it(`${POSIX} the character devices /dev/null and /dev/zero (the second would never end)`, () => {
      for (const device of ['/dev/null', '/dev/zero']) {
        const error = readError(() => readRegularFile(device));
        assert.equal(error.reason, 'kind');
        assert.equal(error.message, 'is a character device, not a regular file');
      }
    });

    it(`${POSIX} a directory, a missing file, a dangling link`, () => {
      assert.equal(readError(() => readRegularFile(dir)).message, 'is a directory, not a regular file');
      assert.equal(readError(() => readRegularFile(path.join(dir, 'absent.yaml'))).reason, 'missing');
      fs.symlinkSync(path.join(dir, 'nowhere'), path.join(dir, 'dangling.yaml'));
      assert.equal(readError(() => readRegularFile(path.join(dir, 'dangling.yaml'))).reason, 'missing');
    });
  });

  describe('the size limit', () => {
    it(`${COMMON} a file at the limit is read whole; one byte above is refused with its size, unread`, () => {
      const file = path.join(dir, 'sized.yaml');
      fs.writeFileSync(file, 'x'.repeat(1000));
      assert.equal(readRegularFile(file, { maxBytes: 1000 }).length, 1000);
      const error = readError(() => readRegularFile(file, { maxBytes: 999 }));
      assert.equal(error.reason, 'too-large');
      assert.equal(error.message, 'is 1000 bytes, above the limit of 999 bytes');
    });

    it(`${COMMON} without a limit, any regular file is read byte for byte (empty, small, several chunks)`, () => {
      for (const length of [0, 1, 4097, 300_000]) {
        const file = path.join(dir, `plain-${length}.bin`);
        const bytes = Buffer.alloc(length, 0x61);
        fs.writeFileSync(file, bytes);
        assert.ok(readRegularFile(file).equals(bytes), `length ${length}`);
      }
    });
  });

  describe('the size of a block device, found by reading', () => {
    it(`${COMMON} probing finds the end of any size up to 2^53 - 1`, () => {
      let checked = 0;
      fc.assert(
        fc.property(fc.oneof(fc.integer({ min: 0, max: 4096 }), fc.integer({ min: 0, max: Number.MAX_SAFE_INTEGER })), (size) => {
          let probes = 0;
          const found = sizeByProbing((offset) => {
            probes++;
            return offset < size;
          });
          checked++;
          assert.equal(found, size);
          assert.ok(probes <= 2 * 54 + 2, `${probes} probes for ${size}`);
        }),
        { numRuns: 300 },
      );
      assert.equal(checked, 300);
      assert.equal(sizeByProbing(() => true), Number.MAX_SAFE_INTEGER, 'a source that never ends stops at the ceiling');
    });

    it(`${COMMON} the probe over a real descriptor gives a regular file's size (the path a block device takes)`, () => {
      const file = path.join(dir, 'probe.img');
      fs.writeFileSync(file, Buffer.alloc(3 * 65536 + 17));
      const fd = fs.openSync(file, 'r');
      try {
        assert.equal(blockDeviceSize(fd), fs.fstatSync(fd).size);
      } finally {
        fs.closeSync(fd);
      }
    });
  });
});
