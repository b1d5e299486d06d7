// The trace formats line by line, as their documents describe them: the I/O log versions 2 and 3 (the
// flexible I/O tester's manual page, "Trace file format"), block-layer trace text (the dumper's manual
// page, DEFAULT OUTPUT and RWBS), CSV (CONTRACTS.md §6); and every way a trace can be unusable.
import { strict as assert } from 'node:assert';
import { execFileSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { BLOCK_TRACE_MANUAL, CONTRACT } from '../../helpers/sources';
import { runCurve } from '../../../src/cli/curve';
import { curve, curveJson, tempFolder } from './helpers';

const IO_LOG_MANUAL = '[the I/O tester\'s manual page, Trace file format v2/v3]';
// 512-byte clusters, whole tables: one cache entry maps 64 * 512 = 32 KiB [SPEC].
const GEOMETRY = ['--size', '1M', '--cluster-size', '512'];

describe('trace readers: formats and unusable traces', function () {
  this.timeout(30_000);
  let folder: ReturnType<typeof tempFolder>;
  const write = (name: string, text: string | Buffer): string => {
    const path = join(folder.dir, name);
    writeFileSync(path, text);
    return name;
  };
  before(() => (folder = tempFolder('readers')));
  after(() => folder.remove());

  it(`${IO_LOG_MANUAL} version 2: file actions, wait, sync and datasync look nothing up; a file name with spaces`, async () => {
    const name = write('v2.log', [
      'fio version 2 iolog',
      '/dev/vd b add',
      '/dev/vd b open',
      '/dev/vd b read 0 4096',
      '/dev/vd b wait 250 0',
      '/dev/vd b write 32768 8192',
      '/dev/vd b sync 0 0',
      '/dev/vd b datasync 0 0',
      '/dev/vd b trim 65536 32768',
      '/dev/vd b read 1024 1024',
      '/dev/vd b close',
      '',
    ].join('\n'));
    const report = await curveJson(folder.dir, name, ...GEOMETRY);
    assert.equal(report.trace.format, 'io-log-v2');
    assert.equal(report.trace.requests, 4);
    assert.equal(report.trace.ignoredEvents, 6);
    assert.equal(report.trace.skippedLines, 0);
    // Entries 0, 1, 2, 0: the last lookup hits once two entries are held, and only then.
    assert.equal(report.lookups, 4);
    assert.equal(report.firstTouches, 3);
    assert.deepEqual(report.curve.map((p) => [p.entries, p.hitRatio]), [[1, 0], [2, 0], [3, 0.25]]);
  });

  it(`${IO_LOG_MANUAL} version 3: a time stamp before each line; unknown actions are counted with the first line number`, async () => {
    const name = write('v3.log', ['fio version 3 iolog', '10 /data add', '12 /data open', '20 /data read 0 512', '21 /data frobnicate 0 512', 'garbage', '30 /data write 512 512', '40 /data close'].join('\r\n'));
    const report = await curveJson(folder.dir, name, ...GEOMETRY);
    assert.equal(report.trace.format, 'io-log-v3');
    assert.equal(report.trace.requests, 2);
    assert.equal(report.trace.skippedLines, 2);
    assert.deepEqual(report.trace.firstSkipped, { file: name, line: 5 });
    const text = await curve(folder.dir, name, ...GEOMETRY);
    assert.match(text.stdout, /2 lines not understood and skipped \(first: v3\.log line 5\)/);
  });

  it(`${IO_LOG_MANUAL} a log of several files is refused, naming them; --file picks one`, async () => {
    const name = write('two.log', ['fio version 3 iolog', '1 /a read 0 512', '2 /b read 0 512', '3 /a write 40960 512', '4 /b read 512 512', '5 /b read 1024 512'].join('\n'));
    const refused = await curve(folder.dir, name, ...GEOMETRY);
    assert.equal(refused.code, 2);
    assert.match(refused.stderr, /two\.log: the trace covers several files: \/a \(2 requests\), \/b \(3 requests\); choose one with --file/);
    const picked = await curveJson(folder.dir, name, ...GEOMETRY, '--file', '/b');
    assert.equal(picked.trace.requests, 3);
    const missing = await curve(folder.dir, name, ...GEOMETRY, '--file', '/c');
    assert.equal(missing.code, 2);
    assert.match(missing.stderr, /two\.log: no request of file "\/c"; it holds \/a, \/b/);
  });

  it(`${BLOCK_TRACE_MANUAL} issued (D) events are the requests; queued, completed, plug and flush events are not; RWBS R, W, D and sync letters; the summary is not counted`, async () => {
    const lines = [
      '  8,0    1        1     0.000000000  4242  Q   R 0 + 8 [db]',
      '  8,0    1        2     0.000001000  4242  G   R 0 + 8 [db]',
      '  8,0    1        3     0.000002000  4242  P   N [db]',
      '  8,0    1        4     0.000003000  4242  D   R 0 + 8 [db]',
      '  8,0    1        5     0.000004000  4242  C   R 0 + 8 [0]',
      '  8,0    1        6     0.000005000  4242  D  WS 64 + 128 [db]',
      '  8,0    1        7     0.000006000  4242  D FWS 0 + 0 [kworker]',
      '  8,0    1        8     0.000007000  4242  D   D 256 + 64 [fstrim]',
      '  8,0    1        9     0.000008000  4242  D   N 0 + 8 [scsi]',
      '  8,0    1       10     0.000009000  4242  m   N cfq4242 insert_request',
      '  8,0    1       11     0.000010000  4242  D  RM 8 + 8 [db]',
      'CPU1 (8,0):',
      ' Reads Queued:           1,        4KiB  Writes Queued:           0,        0KiB',
      'Total (8,0):',
      'Events (8,0): 11 entries',
    ];
    const name = write('blk.txt', `${lines.join('\n')}\n`);
    const report = await curveJson(folder.dir, name, ...GEOMETRY);
    assert.equal(report.trace.format, 'block-trace');
    // D R 0+8 (4 KiB at 0), D WS 64+128 (64 KiB at 32 KiB), D D 256+64 (32 KiB at 128 KiB), D RM 8+8.
    assert.equal(report.trace.requests, 4);
    assert.equal(report.trace.skippedLines, 0);
    // Sectors of 512 bytes: entries {0}, {1, 2}, {4}, {0}.
    assert.equal(report.lookups, 5);
    assert.equal(report.entriesTouched, 4);
  });

  it(`${BLOCK_TRACE_MANUAL} a trace without issued events is read from its queued (Q) events; --device picks one of several devices`, async () => {
    const name = write('queued.txt', [
      '  8,0    0        1     0.000000000  11  Q   R 0 + 8 [db]',
      '  8,16   0        2     0.000001000  11  Q   W 2048 + 8 [db]',
      '  8,0    0        3     0.000002000  11  Q   R 0 + 8 [db]',
    ].join('\n'));
    const refused = await curve(folder.dir, name, ...GEOMETRY);
    assert.equal(refused.code, 2);
    assert.match(refused.stderr, /queued\.txt: the trace covers several devices: 8,0 \(2 requests\), 8,16 \(1 request\); choose one with --device/);
    const picked = await curveJson(folder.dir, name, ...GEOMETRY, '--device', '8,0');
    assert.equal(picked.trace.requests, 2);
    assert.equal(picked.curve.at(-1)?.hitRatio, 0.5);
  });

  it(`${CONTRACT} CSV with a header, op words and letters, flushes, a comment; requests past the virtual size are counted and left out`, async () => {
    const name = write('ops.csv', ['offset,length,op', '# from the nightly batch', '0,4096,read', '4096, 4096 ,W', '0,4096,flush', '32768,512', '1048576,512,read', '1048064,1024,write', '7,8,teleport', ''].join('\n'));
    const report = await curveJson(folder.dir, name, ...GEOMETRY);
    assert.equal(report.trace.format, 'csv');
    assert.equal(report.trace.requests, 3);
    assert.equal(report.trace.pastEnd, 2);
    assert.equal(report.trace.skippedLines, 1);
    assert.deepEqual(report.trace.firstSkipped, { file: name, line: 9 });
    const text = await curve(folder.dir, name, ...GEOMETRY);
    assert.match(text.stdout, /2 requests ran past the 1 MiB disk and were left out/);
  });

  it(`${CONTRACT} gzip is told by its magic bytes, whatever the name`, async () => {
    const name = write('plain-name.csv', gzipSync('0,512\n512,512\n0,512\n'));
    const report = await curveJson(folder.dir, name, ...GEOMETRY);
    assert.equal(report.trace.requests, 3);
  });

  const unusable: Array<[label: string, file: string, content: string | Buffer | undefined, expected: RegExp]> = [
    ['a missing file', 'nothing.csv', undefined, /nothing\.csv: no such file or directory/],
    ['an empty file', 'empty.csv', '', /empty\.csv: no usable request: the file holds no lines/],
    ['only a header', 'header.csv', 'offset,length\n', /header\.csv: no usable request/],
    ['a binary file', 'binary.csv', Buffer.from(Array.from({ length: 300_000 }, (_, i) => (i * 7919) % 251)), /binary\.csv: cannot tell the trace format/],
    ['only flushes', 'flushes.csv', '0,0\n0,4096,flush\n', /flushes\.csv: no usable request: no read, write or discard/],
    ['every request past the end', 'past.csv', '2097152,512\n', /past\.csv: no usable request: all 1 request run past the end of the 1 MiB disk/],
    ['a truncated gzip stream', 'truncated.csv', gzipSync('0,512\n'.repeat(1000)).subarray(0, 40), /truncated\.csv: not a readable gzip stream/],
    ['a folder', '.', undefined, /\.: is a directory, not a regular file/],
    ['a named pipe', 'pipe.csv', undefined, /pipe\.csv: is a named pipe \(FIFO\), not a regular file/],
  ];
  for (const [label, file, content, expected] of unusable) {
    it(`${CONTRACT} ${label}: exit 2, the file named, no stack trace`, async () => {
      if (content !== undefined) write(file, content);
      if (label === 'a named pipe') execFileSync('mkfifo', [join(folder.dir, file)]);
      const run = await curve(folder.dir, file, ...GEOMETRY);
      assert.equal(run.code, 2);
      assert.match(run.stderr, expected);
      assert.doesNotMatch(run.stderr, /^\s+at /m);
      assert.equal(run.stdout, '');
    });
  }

  it(`${CONTRACT} usage errors: no trace, no --size, a bad --sample or --target`, async () => {
    for (const [args, message] of [
      [['--size', '1M'], /name at least one TRACE file/],
      [['x.csv'], /--size is required/],
      [['x.csv', '--size', '1M', '--sample', '0'], /--sample \(rate\): sample rate 0 is not allowed/],
      [['x.csv', '--size', '1M', '--target', '150%'], /--target \(hit ratio\): "150%" is out of range/],
      [['x.csv', '--size', '1M', '--cache-entry-size', '1M'], /--cache-entry-size: cache entry size 1 MiB is larger than the cluster/],
    ] as const) {
      const run = await curve(folder.dir, ...args);
      assert.equal(run.code, 2);
      assert.match(run.stderr, message);
    }
  });

  it(`${CONTRACT} an overlong line is one skipped line, and reading goes on`, async () => {
    const name = write('long.csv', `0,512\n${'9'.repeat(200_000)}\n512,512\n`);
    const report = await curveJson(folder.dir, name, ...GEOMETRY);
    assert.equal(report.trace.requests, 2);
    assert.equal(report.trace.skippedLines, 1);
    assert.deepEqual(report.trace.firstSkipped, { file: name, line: 2 });
  });
});

describe('curve command: what the output says', function () {
  this.timeout(30_000);
  let folder: ReturnType<typeof tempFolder>;
  before(() => {
    folder = tempFolder('curve-output');
    const lines = Array.from({ length: 20_000 }, (_, i) => `${((i * 7919) % 4096) * 32768},4096`);
    writeFileSync(join(folder.dir, 'spread.csv'), `${lines.join('\n')}\n`);
  });
  after(() => folder.remove());

  it(`${CONTRACT} a sampled curve says so and at which rate, in JSON and in text`, async () => {
    const json = await curveJson(folder.dir, 'spread.csv', '--size', '128M', '--cluster-size', '512', '--sample', '25%');
    assert.equal(json.sampleRate, 0.25);
    // A quarter sample resolves caches of 4 entries and more: the curve starts there.
    assert.equal(json.curve[0]?.entries, 4);
    const text = await curve(folder.dir, 'spread.csv', '--size', '128M', '--cluster-size', '512', '--sample', '0.25');
    assert.match(text.stdout, /SAMPLED\s+only 25% of cache entries were counted/);
    assert.match(text.stdout, /cache size against hit ratio \(estimated\)/);
    const exact = await curve(folder.dir, 'spread.csv', '--size', '128M', '--cluster-size', '512');
    assert.doesNotMatch(exact.stdout, /SAMPLED|estimated/);
  });

  it(`${CONTRACT} a progress line goes to stderr when it is a terminal, and is erased at the end`, async () => {
    let stderr = '';
    let stdout = '';
    const code = await runCurve(['spread.csv', '--size', '128M'], { stdout: (t) => void (stdout += t), stderr: (t) => void (stderr += t), cwd: folder.dir, stderrIsTTY: true });
    assert.equal(code, 0);
    assert.match(stderr, /\r\u001b\[Kreading spread\.csv: \d+%, [\d,]+ requests/);
    assert.ok(stderr.endsWith('\r\u001b[K'), 'the line is erased');
    assert.doesNotMatch(stdout, /reading/);
  });
});
