// Broken and hostile files: each gets a clear error of a stated kind, without a hang and with bounded
// memory. Field offsets and rules are those of the qcow2 specification [SPEC "Header", "Cluster mapping"].
import { strict as assert } from 'node:assert';
import { spawnSync } from 'node:child_process';
import { closeSync, ftruncateSync, openSync, readFileSync, writeFileSync, writeSync, mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { inspectImage, type ImageErrorKind } from '../../src/image';
import { tempFolder } from './helpers';
import { writeImage, type ImageSpec } from './qcow2-writer';

const GiB = 1n << 30n;
const TiB = 1n << 40n;

describe('malformed images', function () {
  this.timeout(60000);
  const folder = tempFolder('malformed');
  after(() => folder.remove());
  let n = 0;
  const base: ImageSpec = { version: 3, clusterBits: 16, virtualSize: GiB, clusters: [{ guest: 0, kind: 'data' }, { guest: 9000, kind: 'compressed' }] };

  /** Writes a valid image, then lets the test damage its bytes. */
  const damaged = (patch: (bytes: Buffer, image: ReturnType<typeof writeImage>) => Buffer | void, spec: ImageSpec = base): string => {
    const path = folder.file(`bad-${n++}.qcow2`);
    const image = writeImage(path, spec);
    const bytes = readFileSync(path);
    const result = patch(bytes, image) ?? bytes;
    writeFileSync(path, result);
    return path;
  };

  const expectError = async (path: string, kind: ImageErrorKind, pattern: RegExp): Promise<void> => {
    const report = await inspectImage(path);
    assert.equal(report.errorKind, kind, `kind for ${report.error}`);
    assert.match(report.error!, pattern);
    assert.ok(report.error!.startsWith(path), 'the message names the file');
    assert.doesNotMatch(report.error!, /\n\s+at /, 'no stack trace');
  };

  it('a truncated header', async () => {
    await expectError(damaged((b) => b.subarray(0, 50)), 'malformed', /truncated header: the file is 50 bytes, a version 3 header needs at least 104/);
    await expectError(damaged((b) => b.subarray(0, 6)), 'malformed', /truncated header/);
  });

  it('a wrong magic', async () => {
    await expectError(damaged((b) => { b[3] = 0xfa; }), 'not-qcow2', /not a qcow2 image/);
  });

  it('a plain text file named .qcow2', async () => {
    const path = folder.file('notes.qcow2');
    writeFileSync(path, 'these are my notes, not a disk image\n');
    await expectError(path, 'not-qcow2', /not a qcow2 image: it starts with "these ar"/);
  });

  it('an empty file', async () => {
    const path = folder.file('empty.qcow2');
    writeFileSync(path, '');
    await expectError(path, 'not-qcow2', /is empty/);
  });

  it('cluster_bits out of range (9..21)', async () => {
    await expectError(damaged((b) => { b.writeUInt32BE(8, 20); }), 'malformed', /cluster_bits 8 is out of range/);
    await expectError(damaged((b) => { b.writeUInt32BE(22, 20); }), 'malformed', /cluster_bits 22 is out of range/);
    await expectError(damaged((b) => { b.writeUInt32BE(0xffffffff, 20); }), 'malformed', /cluster_bits 4294967295 is out of range/);
  });

  it('an unknown version', async () => {
    await expectError(damaged((b) => { b.writeUInt32BE(4, 4); }), 'unsupported', /version 4 is not supported/);
  });

  it('an unknown incompatible feature bit, named from the feature name table', async () => {
    const path = damaged(() => undefined, { ...base, extraIncompatible: 1n << 7n, featureNames: [{ kind: 0, bit: 7, name: 'shiny feature' }] });
    await expectError(path, 'unsupported', /unknown incompatible feature bit 7 \("shiny feature"\)/);
    await expectError(damaged(() => undefined, { ...base, extraIncompatible: 1n << 40n }), 'unsupported', /unknown incompatible feature bit 40 is set/);
  });

  it('a bad header_length, refcount_order or header extension', async () => {
    await expectError(damaged((b) => { b.writeUInt32BE(100, 100); }), 'malformed', /header_length 100 is invalid/);
    await expectError(damaged((b) => { b.writeUInt32BE(7, 96); }), 'malformed', /refcount_order 7 is out of range/);
    await expectError(damaged((b) => { b.writeUInt32BE(0x1234, 112); b.writeUInt32BE(0x7fffffff, 116); }), 'malformed', /header extension 0x1234 .* past the end of the first cluster/);
  });

  it('an L1 table larger than the file', async () => {
    await expectError(damaged((b) => { b.writeUInt32BE(0x10000000, 36); }), 'malformed', /the L1 table \(2147483648 bytes .*\) extends past the end of the file/);
  });

  it('an L1 table too small for the virtual size', async () => {
    await expectError(damaged((b) => { b.writeBigUInt64BE(1n << 50n, 24); }), 'malformed', /the L1 table has 2 entries but the virtual size .* needs 2097152/);
  });

  it('misaligned offsets: L1 table, L2 table, data cluster, refcount table', async () => {
    await expectError(damaged((b, i) => { b.writeBigUInt64BE(BigInt(i.l1Offset + 512), 40); }), 'malformed', /L1 table offset 0x10200 is not aligned to the 64 KiB cluster size/);
    await expectError(damaged((b, i) => { b.writeBigUInt64BE(BigInt(i.l2Tables.get(0)! + 4096) | (1n << 63n), i.l1Offset); }), 'malformed', /L2 table of L1 entry 0 .* not aligned/);
    await expectError(damaged((b, i) => { b.writeBigUInt64BE(BigInt(i.dataOffsets.get(0)! + 512) | (1n << 63n), i.l2Tables.get(0)!); }), 'malformed', /data cluster for guest offset 0x0 is at host offset 0x[0-9a-f]+, not aligned/);
    await expectError(damaged((b) => { b.writeBigUInt64BE(0x20200n, 48); }), 'malformed', /refcount table offset 0x20200 is not aligned/);
  });

  it('offsets past the end: L2 table, data cluster, compressed data, backing name', async () => {
    await expectError(damaged((b, i) => { b.writeBigUInt64BE((1n << 40n) | (1n << 63n), i.l1Offset); }), 'malformed', /L2 table of L1 entry 0 .* past the end of the file/);
    await expectError(damaged((b, i) => { b.writeBigUInt64BE((1n << 40n) | (1n << 63n), i.l2Tables.get(0)!); }), 'malformed', /data cluster for guest offset 0x0 .* past the end of the file/);
    await expectError(damaged((b, i) => { b.writeBigUInt64BE((1n << 62n) | (1n << 40n), i.l2Tables.get(0)! + 9000 * 8); }), 'malformed', /compressed data for guest offset 0x23280000 .* outside the file/);
    await expectError(damaged((b) => { b.writeBigUInt64BE(1n << 40n, 8); b.writeUInt32BE(10, 16); }), 'malformed', /backing file name .* extends past the end of the file/);
    await expectError(damaged((b) => { b.writeBigUInt64BE(512n, 8); b.writeUInt32BE(1024, 16); }), 'malformed', /backing file name is 1024 bytes long; the format allows at most 1023/);
  });

  it('an empty backing file name names nothing [SPEC: backing_file_size]', async () => {
    const path = damaged((b) => { b.writeBigUInt64BE(512n, 8); b.writeUInt32BE(0, 16); });
    const report = await inspectImage(path);
    assert.equal(report.error, undefined);
    assert.equal(report.backing, null);
  });

  it('two L1 entries sharing one L2 table (bounded work, not a loop of rereads)', async () => {
    await expectError(damaged((b, i) => { b.writeBigUInt64BE(BigInt(i.l2Tables.get(0)!), i.l1Offset + 8); }), 'malformed', /L2 table of L1 entry 1 .* same place as the L2 table of L1 entry 0/);
  });

  it('reserved bits are counted as warnings, not errors [SPEC: reserved, set to 0]', async () => {
    const path = damaged((b, i) => {
      const table = i.l2Tables.get(0)!;
      b.writeBigUInt64BE(b.readBigUInt64BE(table) | 0x2n, table); // bit 1 of a standard descriptor
      b.writeBigUInt64BE((1n << 57n) | 0x1n, table + 8 * 20); // bits 57 and 0 of an unallocated entry
    });
    const report = await inspectImage(path);
    assert.equal(report.error, undefined);
    assert.deepEqual(report.warnings, ['2 L2 entries with reserved bits set, the first at guest offset 0x0']);
    assert.equal(report.zeroClusters, 1);
  });

  it('a directory and a missing file', async () => {
    const dir = folder.file('dir.qcow2');
    mkdirSync(dir);
    await expectError(dir, 'unreadable', /is a directory/);
    await expectError(folder.file('absent.qcow2'), 'missing', /no such file/);
  });

  describe('bounded memory and time in a separate process (maxRSS measured)', () => {
    const LIMIT_KIB = 300 * 1024; // "a few hundred MB"
    const run = (path: string): { maxRssKiB: number; errorKind: string | null; l2: number | null } => {
      const script = `
        // Peak resident memory of this process alone: /proc's VmHWM is per address space, while getrusage's
        // maxRSS on Linux carries over the parent's peak across fork and exec.
        function peakKiB() {
          try { return Number(/VmHWM:\\s+(\\d+)/.exec(require('node:fs').readFileSync('/proc/self/status', 'utf8'))[1]); }
          catch { return process.resourceUsage().maxRSS; }
        }
        const { inspectImage } = require(${JSON.stringify(join(__dirname, '../../src/image'))});
        inspectImage(process.argv[1]).then((r) => {
          console.log(JSON.stringify({ maxRssKiB: peakKiB(), errorKind: r.errorKind ?? null, l2: r.l2TablesAllocated }));
        });`;
      const child = spawnSync(process.execPath, ['-r', 'tsx/cjs', '-e', script, path], { encoding: 'utf8', timeout: 50000, cwd: join(__dirname, '../..') });
      assert.equal(child.status, 0, child.stderr);
      return JSON.parse(child.stdout.trim().split('\n').pop()!);
    };

    it('a header claiming an exabyte disk and a 4-billion-entry L1 table in a small file', () => {
      const path = damaged((b) => { b.writeBigUInt64BE(1n << 62n, 24); b.writeUInt32BE(0xffffffff, 36); });
      const result = run(path);
      assert.equal(result.errorKind, 'malformed');
      assert.ok(result.maxRssKiB < LIMIT_KIB, `maxRSS ${result.maxRssKiB} KiB`);
      if (process.env.CACHEWRIGHT_SHOW_RSS) console.log(`      maxRSS ${Math.round(result.maxRssKiB / 1024)} MiB`);
    });

    it('a real 1 TiB sparse file whose header claims 32 PiB and a 512 MiB L1 table: streamed, not loaded', () => {
      // 32 PiB at 64 KiB clusters needs 2^55 / 2^29 = 2^26 L1 entries [SPEC]: 512 MiB of L1 table.
      const path = folder.file('huge-l1.qcow2');
      const virtualSize = 32n * 1024n * TiB;
      const l1Entries = Number(virtualSize / (1n << 29n));
      const header = Buffer.alloc(65536);
      header.writeUInt32BE(0x514649fb, 0);
      header.writeUInt32BE(3, 4);
      header.writeUInt32BE(16, 20);
      header.writeBigUInt64BE(virtualSize, 24);
      header.writeUInt32BE(l1Entries, 36);
      header.writeBigUInt64BE(3n * 65536n, 40);
      header.writeBigUInt64BE(65536n, 48);
      header.writeUInt32BE(1, 56);
      header.writeUInt32BE(4, 96);
      header.writeUInt32BE(112, 100);
      const fd = openSync(path, 'w');
      writeSync(fd, header, 0, header.length, 0);
      // one L2 table at 128 KiB, referenced by the last L1 entry: the walk must reach the end
      const l1Entry = Buffer.alloc(8);
      l1Entry.writeBigUInt64BE((2n * 65536n) | (1n << 63n));
      writeSync(fd, l1Entry, 0, 8, 3 * 65536 + (l1Entries - 1) * 8);
      ftruncateSync(fd, Number(TiB));
      closeSync(fd);
      const result = run(path);
      assert.equal(result.errorKind, null);
      assert.equal(result.l2, 1);
      assert.ok(result.maxRssKiB < LIMIT_KIB, `maxRSS ${result.maxRssKiB} KiB`);
      if (process.env.CACHEWRIGHT_SHOW_RSS) console.log(`      maxRSS ${Math.round(result.maxRssKiB / 1024)} MiB`);
    });
  });
});
