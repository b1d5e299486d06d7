// Real I/O logs written by Debian's flexible I/O tester (3.33, null engine: no disk is touched) for
// random, Zipf and sequential jobs [IO_TESTER]: every request is read; the hit counts equal a
// general-purpose LRU library replaying the same lookups [lru-cache]; a sequential job's one-entry
// cache hits 1 - 1/(requests per entry) [common practice: a scan misses once per entry]; the same
// requests written as CSV and as block-layer trace text give the same curve [block-trace manual].
import { strict as assert } from 'node:assert';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { BLOCK_TRACE_MANUAL, COMMON, IO_TESTER, LRU_CACHE } from '../../helpers/sources';
import { asBlockTrace, asCsv, curveJson, ioLogRequests, libraryHits, lookupsOf, requireIoTester, tempFolder, writeIoLog } from './helpers';

const MiB = 1024 * 1024;
// 4 KiB clusters, whole-table entries: one cache entry maps 512 * 4 KiB = 2 MiB of the disk [SPEC].
const GEOMETRY = ['--size', '256M', '--cluster-size', '4K'];
const SPAN = 2 * MiB;
const SIZES_IN_ENTRIES = [1, 2, 5, 16, 40, 100, 128];

describe(`trace readers on real I/O logs ${IO_TESTER}`, function () {
  this.timeout(120_000);
  let folder: ReturnType<typeof tempFolder>;
  const logs: Record<string, string> = {};

  before(function () {
    requireIoTester(this);
    folder = tempFolder('iolog');
    const common = { size: '256m', bs: '4k', randseed: 12 };
    logs.random = writeIoLog(folder.dir, 'random', { ...common, rw: 'randrw', number_ios: 30_000 });
    logs.zipf = writeIoLog(folder.dir, 'zipf', { ...common, rw: 'randrw', random_distribution: 'zipf:1.1', number_ios: 30_000 });
    logs.trim = writeIoLog(folder.dir, 'trim', { ...common, rw: 'randtrim', number_ios: 5_000 });
    logs.sequential = writeIoLog(folder.dir, 'sequential', { size: '64m', bs: '16k', rw: 'read', fsync: 16 });
  });

  after(() => folder?.remove());

  for (const job of ['random', 'zipf', 'trim'] as const) {
    it(`${IO_TESTER} ${LRU_CACHE} ${job} job: every request read, hit counts equal the library's at ${SIZES_IN_ENTRIES.length} sizes`, async () => {
      const log = logs[job] as string;
      const requests = ioLogRequests(readFileSync(log, 'utf8'));
      assert.ok(requests.length >= 5_000, `the job wrote ${requests.length} requests`);
      const report = await curveJson(folder.dir, log, ...GEOMETRY, '--at', SIZES_IN_ENTRIES.map((n) => `${n * 4}K`).join(','));
      assert.equal(report.trace.format, 'io-log-v3');
      assert.equal(report.trace.requests, requests.length);
      assert.equal(report.trace.skippedLines, 0);
      const keys = lookupsOf(requests, SPAN);
      assert.equal(report.lookups, keys.length);
      report.at.forEach((point, i) => {
        const capacity = SIZES_IN_ENTRIES[i] as number;
        assert.equal(point.entries, capacity);
        assert.equal(report.lookups - point.misses, libraryHits(keys, capacity), `${job}, ${capacity} entries`);
      });
    });
  }

  it(`${IO_TESTER} ${COMMON} sequential 16 KiB reads over 64 MiB: a one-entry cache hits 1 - 1/(requests per entry)`, async () => {
    const log = logs.sequential as string;
    const requests = ioLogRequests(readFileSync(log, 'utf8'));
    assert.equal(requests.length, (64 * MiB) / (16 * 1024));
    const perEntry = SPAN / (16 * 1024);
    const report = await curveJson(folder.dir, log, ...GEOMETRY, '--at', '4K');
    assert.equal(report.entriesTouched, (64 * MiB) / SPAN);
    assert.ok(report.trace.ignoredEvents > 0, 'the job\'s syncs are read and look nothing up');
    assert.equal(report.at[0]?.hitRatio, 1 - 1 / perEntry);
    // With 512-byte slices a cache entry maps 64 * 4 KiB = 256 KiB: 16 requests per entry.
    const sliced = await curveJson(folder.dir, log, ...GEOMETRY, '--cache-entry-size', '512', '--at', '512');
    assert.equal(sliced.at[0]?.hitRatio, 1 - 1 / 16);
  });

  it(`${IO_TESTER} ${BLOCK_TRACE_MANUAL} the same requests as an I/O log, a CSV, block-trace text and a gzip-compressed log give the same curve`, async () => {
    const log = logs.zipf as string;
    const requests = ioLogRequests(readFileSync(log, 'utf8'));
    const csv = join(folder.dir, 'zipf.csv');
    writeFileSync(csv, asCsv(requests));
    const text = join(folder.dir, 'zipf.blocktrace.txt');
    writeFileSync(text, asBlockTrace(requests));
    const gz = join(folder.dir, 'zipf.log.gz');
    writeFileSync(gz, gzipSync(readFileSync(log)));
    const args = [...GEOMETRY, '--at', '12K,100K,1M', '--target', '95%'];
    const reports = await Promise.all([log, csv, text, gz].map((file) => curveJson(folder.dir, file, ...args)));
    assert.deepEqual(reports.map((r) => r.trace.format), ['io-log-v3', 'csv', 'block-trace', 'io-log-v3']);
    const [first, ...others] = reports;
    for (const other of others) {
      assert.equal(other.trace.requests, first?.trace.requests);
      assert.equal(other.trace.skippedLines, 0);
      assert.deepEqual(other.curve, first?.curve);
      assert.deepEqual(other.at, first?.at);
      assert.deepEqual(other.target, first?.target);
    }
  });
});
