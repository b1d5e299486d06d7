// `cachewright size` as a user runs it: the built dist/cli.js in a child process. Expected numbers are
// worked out from docs/sources.md's formulas and check table, not read from the engine.
import { strict as assert } from 'node:assert';
import { execFile, execFileSync } from 'node:child_process';
import * as path from 'node:path';
import fc from 'fast-check';
import { runSize } from '../../src/cli/size';
import type { CommandIO } from '../../src/cli/io';
import { CACHE, COMMON, CONTRACT, IEC, SPEC } from '../helpers/sources';

const ROOT = path.resolve(__dirname, '..', '..');
const CLI = path.join(ROOT, 'dist', 'cli.js');

interface Run {
  code: number | null;
  stdout: string;
  stderr: string;
}

const runs = new Map<string, Promise<Run>>();

/** Runs the CLI once per distinct argv; the before hook starts many of them in parallel. */
function cachewright(...args: string[]): Promise<Run> {
  const key = JSON.stringify(args);
  let run = runs.get(key);
  if (run === undefined) {
    run = new Promise((resolve) => {
      execFile(process.execPath, [CLI, ...args], { cwd: ROOT, env: { ...process.env, CACHEWRIGHT_DEBUG: '' } }, (error, stdout, stderr) => {
        const code = error ? (typeof error.code === 'number' ? error.code : null) : 0;
        resolve({ code, stdout, stderr });
      });
    });
    runs.set(key, run);
  }
  return run;
}

/** A stack frame line as Node prints them: "    at fn (file:line:col)". */
const STACK_FRAME = /^\s+at \S/m;

/** The contract's `sizing` object (docs/cli.md) plus l2Tables, in this order. */
const SIZING_KEYS = [
  'virtualSize', 'clusterSize', 'l2EntryBytes', 'l2FullCoverage', 'l2Effective', 'l2CoveredBytes',
  'refcountEffective', 'layers', 'cacheMemoryTotal', 'l2Tables',
];
/** Issue 6 adds the cache model's prediction after them. */
const SIZE_OUTPUT_KEYS = [...SIZING_KEYS, 'model'];

const KiB = 1024;
const MiB = 1024 * KiB;
const GiB = 1024 * MiB;

// argv after `cachewright size`, then fragments the message must contain (the value, the range)
const BAD_INPUT: [string, string[], string[]][] = [
  [`${IEC} unknown unit`, ['--size', '20X'], ['"20X"', 'unknown unit "X"', 'K, M, G, T, P', 'kB, MB, GB, TB']],
  [`${IEC} ambiguous unit KB`, ['--size', '4KB'], ['"4KB"', 'ambiguous', 'KiB', 'kB']],
  [`${COMMON} negative size`, ['--size', '-5G'], ['"-5G"', 'negative', 'below 0']],
  [`${COMMON} negative size with =`, ['--size=-1'], ['"-1"', 'negative']],
  [`${COMMON} fractional bytes`, ['--size', '1.5'], ['"1.5"', 'whole number of bytes']],
  [`${COMMON} fractional bytes with a unit`, ['--size', '0.3K'], ['"0.3K"', 'whole number of bytes']],
  [`${COMMON} zero size`, ['--size', '0'], ['0 bytes']],
  [`${SPEC} cluster not a power of two`, ['--size', '20G', '--cluster-size', '48K'], ['49152', '48 KiB', 'power of two', '512 B to 2 MiB']],
  [`${SPEC} cluster below 512 B`, ['--size', '20G', '--cluster-size', '256'], ['256', 'power of two', '512 B to 2 MiB']],
  [`${SPEC} cluster above 2 MiB`, ['--size', '20G', '--cluster-size', '4M'], ['4194304', '4 MiB', '512 B to 2 MiB']],
  [`${CACHE} cache entry larger than the cluster`, ['--size', '20G', '--cache-entry-size', '128K'], ['128 KiB', 'larger than the cluster', '64 KiB', 'at most the cluster size']],
  [`${CACHE} cache entry below 512 B`, ['--size', '20G', '--cache-entry-size', '256'], ['256', 'at least 512 B']],
  [`${CACHE} cache entry size not a power of two`, ['--size', '20G', '--cache-entry-size', '3000'], ['3000', 'power of two']],
  [`${SPEC} extended L2 below 16 KiB clusters`, ['--size', '20G', '--cluster-size', '8K', '--extended-l2'], ['8 KiB', 'at least 16 KiB']],
  [`${SPEC} refcount width not allowed`, ['--size', '20G', '--refcount-bits', '12'], ['12', '1, 2, 4, 8, 16, 32 or 64']],
  [`${SPEC} refcount width not a number`, ['--size', '20G', '--refcount-bits', 'wide'], ['"wide"', '1, 2, 4, 8, 16, 32, 64']],
  [`${CONTRACT} missing --size`, ['--cluster-size', '64K'], ['--size is required']],
  [`${CONTRACT} --size without a value`, ['--size'], ['--size needs a value']],
  [`${CONTRACT} unknown option`, ['--size', '20G', '--frobnicate'], ['unknown option --frobnicate']],
  [`${CONTRACT} unknown short option`, ['-x'], ['unknown option -x']],
  [`${CONTRACT} unknown format`, ['--size', '20G', '--format', 'yaml'], ['"yaml"', 'text or json']],
  [`${CONTRACT} unknown driver generation`, ['--size', '20G', '--driver', 'ancient'], ['"ancient"', 'current or legacy']],
  [`${CONTRACT} a flag given a value`, ['--size', '20G', '--extended-l2=yes'], ['--extended-l2 takes no value']],
  [`${CONTRACT} an option given twice`, ['--size', '20G', '--size', '30G'], ['--size is given more than once']],
  [`${COMMON} fractional cache size`, ['--size', '20G', '--cache', '1.5'], ['"1.5"', 'whole number of bytes']],
  [`${CONTRACT} another notation's Zipf spelling`, ['--size', '20G', '--access', 'zipf:1.1'], ['--access', '"zipf:1.1"', 'random, sequential, mixed, zipf(S)', '"P% on Q%"']],
  [`${CONTRACT} another notation's hot-spot spelling`, ['--size', '20G', '--access', 'hotspot:0.9/0.1'], ['"hotspot:0.9/0.1"', 'zipf(S)', '"P% on Q%"']],
  [`${CONTRACT} "uniform" is spelled random`, ['--size', '20G', '--access', 'uniform'], ['"uniform"', 'random, sequential']],
];

/** The other invocations below, started early by the before hook (results are memoized by argv). */
const OTHER_RUNS: string[][] = [
  ['size', '--size', '20G', '--format', 'json'], ['size', '--size', '20G'], ['size', '--help'], ['sizes', '--size', '20G'],
  ['size', '--size', '1T', '--extended-l2', '--format', 'json'], ['size', '--size', '1T', '--format', 'json'],
  ['size', '--size', '1T', '--format', 'json', '--platform', 'other'], ['size', '--size', '1T', '--format', 'json', '--driver', 'legacy'],
  ['size', '--size', '1280M', '--format', 'json'], ['size', '--size', '1280M', '--cache-entry-size', '4K', '--format', 'json'],
  ['size', '--size', '20G', '--cache', '1M', '--format', 'json'], ['size', '--size', '20G', '--cache', '64M', '--format', 'json'],
  ['size', '--size', '512G', '--cluster-size', '1M', '--format', 'json'], ['size', '--size', '2048P', '--format', 'json'],
  ['size', '--size', '1T', '--cluster-size', '2M'], ['size', '--size', '1T', '--cluster-size', '2M', '--extended-l2'],
  ['size', '--size', '20G', '--refcount-bits', '64'], ['size', '--size', '20G', '--platform', 'other'],
  ['size', '--size', '20G', '--cache', '64M'],
  ['size', '--size', '20G', '--cache', '1M', '--access', 'zipf(1.1)'], ['size', '--size', '20G', '--cache', '1M', '--access', '90% on 10%'],
  ['--help', 'size'], ['size', '-h'], ['-h', 'size'], ['size', '--size', '20G', '--help'], ['--version'], ['size', '--version'], ['--version', 'lint'],
];

describe('cli: cachewright size', function () {
  this.timeout(30000);

  before(function () {
    // the build shares the machine with other work: give it room (no test asserts on time)
    this.timeout(180000);
    // one build for the whole file; the tests then run what the package's bin runs
    execFileSync('npm', ['run', '-s', 'build'], { cwd: ROOT, stdio: 'pipe' });
    // start the runs together: each is an independent process, and serially they are slow
    for (const [, args] of BAD_INPUT) void cachewright('size', ...args);
    for (const args of OTHER_RUNS) void cachewright(...args);
  });

  describe('--format json', () => {
    it(`${CONTRACT}/${CACHE} --size 20G prints exactly the sizing object plus l2Tables, with integer byte counts`, async () => {
      const run = await cachewright('size', '--size', '20G', '--format', 'json');
      assert.equal(run.code, 0, run.stderr);
      assert.equal(run.stderr, '');
      const parsed: unknown = JSON.parse(run.stdout);
      assert.ok(parsed !== null && typeof parsed === 'object' && !Array.isArray(parsed));
      assert.deepEqual(Object.keys(parsed), SIZE_OUTPUT_KEYS);
      assert.deepEqual(parsed, {
        virtualSize: 20 * GiB, // 21474836480
        clusterSize: 64 * KiB, // the usual default [SPEC]
        l2EntryBytes: 8, // standard entries [SPEC]
        l2FullCoverage: 2.5 * MiB, // docs/sources.md check values: 20 GiB at 64 KiB -> 2.5 MiB
        l2Effective: 2.5 * MiB, // current/linux default: up to 32 MiB, never above full coverage [CACHE]
        l2CoveredBytes: 20 * GiB, // 2.5 MiB * 64 KiB / 8 = 20 GiB [CACHE]
        refcountEffective: 256 * KiB, // 4 clusters [CACHE]
        layers: 1,
        cacheMemoryTotal: 2.5 * MiB + 256 * KiB,
        l2Tables: 40, // 20 GiB / (64 KiB * 8192) = 40 [SPEC]
        // the cache holds all 40 tables: uniform access hits every time, C/N = 40/40 [IRM]
        model: { hitRatio: 1, entries: 40, cachedEntries: 40, missesPer1000: 0, metadataBytesPerIo: 0 },
      });
      // integers in the text itself: no quotes, no fraction, no exponent
      for (const key of SIZING_KEYS) assert.match(run.stdout, new RegExp(`"${key}": \\d+(,|\\n)`), key);
    });

    it(`${SPEC}/${CACHE} --extended-l2 doubles the entry bytes and the full-coverage need (1 TiB: 256 MiB)`, async () => {
      const run = await cachewright('size', '--size', '1T', '--extended-l2', '--format', 'json');
      assert.equal(run.code, 0, run.stderr);
      const parsed = JSON.parse(run.stdout) as Record<string, number>;
      assert.equal(parsed.l2EntryBytes, 16);
      assert.equal(parsed.l2FullCoverage, 256 * MiB); // docs/sources.md check values
      assert.equal(parsed.l2Effective, 32 * MiB); // capped by the current/linux default
      assert.equal(parsed.l2CoveredBytes, 128 * GiB); // 32 MiB * 64 KiB / 16
      assert.equal(parsed.l2Tables, 4096); // 1 TiB / (64 KiB * 4096)
      assert.equal(parsed.refcountEffective, 256 * KiB); // refcounts are left alone
    });

    it(`${CACHE} --cache-entry-size 4K rounds full coverage to whole cache entries: 1280 MiB -> 160 KiB (whole tables: 192 KiB)`, async () => {
      const sliced = JSON.parse((await cachewright('size', '--size', '1280M', '--cache-entry-size', '4K', '--format', 'json')).stdout) as Record<string, number>;
      const whole = JSON.parse((await cachewright('size', '--size', '1280M', '--format', 'json')).stdout) as Record<string, number>;
      assert.equal(sliced.l2FullCoverage, 160 * KiB);
      assert.equal(whole.l2FullCoverage, 192 * KiB);
      assert.equal(whole.l2Tables, 3);
    });

    it(`${CACHE} --cache 1M on 20 GiB covers 8 GiB; a cache above full coverage is used only up to it`, async () => {
      const small = JSON.parse((await cachewright('size', '--size', '20G', '--cache', '1M', '--format', 'json')).stdout) as Record<string, number>;
      assert.equal(small.l2Effective, MiB);
      assert.equal(small.l2CoveredBytes, 8 * GiB); // docs/sources.md check values: 1 MiB covers 8 GiB at 64 KiB
      assert.equal(small.cacheMemoryTotal, MiB + 256 * KiB);
      const big = JSON.parse((await cachewright('size', '--size', '20G', '--cache', '64M', '--format', 'json')).stdout) as Record<string, number>;
      assert.equal(big.l2Effective, 2.5 * MiB);
    });

    it(`${CACHE} --driver and --platform pick the default profile: 1 TiB gets 32 MiB, 8 MiB or 1 MiB`, async () => {
      const l2 = async (...args: string[]): Promise<number> =>
        (JSON.parse((await cachewright('size', '--size', '1T', '--format', 'json', ...args)).stdout) as Record<string, number>).l2Effective ?? -1;
      assert.equal(await l2(), 32 * MiB);
      assert.equal(await l2('--platform', 'other'), 8 * MiB);
      assert.equal(await l2('--driver', 'legacy'), MiB);
      assert.equal(await l2('--driver', 'legacy', '--platform', 'other'), MiB);
    });

    it(`${SPEC} 1 MiB clusters: a 512 GiB disk has exactly four L2 tables`, async () => {
      const parsed = JSON.parse((await cachewright('size', '--size', '512G', '--cluster-size', '1M', '--format', 'json')).stdout) as Record<string, number>;
      assert.equal(parsed.l2Tables, 4);
      assert.equal(parsed.l2FullCoverage, 4 * MiB);
    });

    it(`${IEC} exact integers for huge sizes: --size 2048P (2^61 bytes) prints 2305843009213693952`, async () => {
      const run = await cachewright('size', '--size', '2048P', '--format', 'json');
      assert.equal(run.code, 0, run.stderr);
      assert.match(run.stdout, /"virtualSize": 2305843009213693952,/);
      assert.match(run.stdout, /"l2FullCoverage": 281474976710656,/); // 2^61 / 2^16 * 8 = 2^48
      assert.match(run.stdout, /"l2Tables": 4294967296,\n/); // one table maps 2^16 * 2^13 = 2^29: 2^61 / 2^29 = 2^32
    });
  });

  describe('text output', () => {
    it(`${CONTRACT} --size 20G shows the sizing table`, async () => {
      const run = await cachewright('size', '--size', '20G');
      assert.equal(run.code, 0, run.stderr);
      const rows: [string, string][] = [
        ['virtual size', '20 GiB'], ['cluster', '64 KiB'], ['L2 tables', '40'], ['full-coverage L2', '2.5 MiB'],
        ['effective L2', '2.5 MiB'], ['refcount cache', '256 KiB'], ['cache memory', '2.75 MiB'], ['first write', '16x'],
      ];
      for (const [label, value] of rows) {
        assert.match(run.stdout, new RegExp(`^${label} +${value.replace('.', '\\.')}\\s`, 'm'), `row ${label}: ${value}`);
      }
      assert.match(run.stdout, /21474836480 bytes/);
      assert.match(run.stdout, /idle cleanup +10m/); // current/linux: 600 s [CACHE]
      // [CACHE] worked example: 256 KiB of refcount cache at 16-bit refcounts covers 8 GiB
      assert.match(run.stdout, /^refcount cache +256 KiB +covers 8 GiB of host clusters at 16-bit refcounts/m);
    });
    it(`${CACHE} --refcount-bits 64: the same 256 KiB covers a quarter as much, 2 GiB`, async () => {
      const run = await cachewright('size', '--size', '20G', '--refcount-bits', '64');
      assert.equal(run.code, 0, run.stderr);
      assert.match(run.stdout, /^refcount cache +256 KiB +covers 2 GiB of host clusters at 64-bit refcounts/m);
    });
    it(`${CONTRACT} a configured cache above full coverage says it is capped`, async () => {
      const run = await cachewright('size', '--size', '20G', '--cache', '64M');
      assert.match(run.stdout, /^effective L2 +2\.5 MiB +configured, capped at full coverage; covers 20 GiB \(100 % of the disk\)/m);
    });
    it(`${CACHE} current/other: idle cleanup is off`, async () => {
      const run = await cachewright('size', '--size', '20G', '--platform', 'other');
      assert.match(run.stdout, /^idle cleanup +0 \(off\)/m);
    });
    it(`${COMMON} shows the cautions of docs/sources.md`, async () => {
      const { stdout } = await cachewright('size', '--size', '20G');
      assert.match(stdout, /take effect when the disk is opened/);
      assert.match(stdout, /restart the VM or reopen the disk/);
      assert.match(stdout, /host memory per disk and per backing layer/);
      assert.match(stdout, /fixed when an image is created/);
      assert.match(stdout, /converting the image into a new file/);
      assert.match(stdout, /Back up first and verify the copy/);
      assert.match(stdout, /recommendations for review, not a guarantee/);
      assert.match(stdout, /change control/);
    });
    it(`${COMMON} first-write cost with subclusters: 4 KiB into 2 MiB clusters is 512x, with extended L2 16x`, async () => {
      const plain = await cachewright('size', '--size', '1T', '--cluster-size', '2M');
      assert.match(plain.stdout, /^first write +512x/m);
      const sub = await cachewright('size', '--size', '1T', '--cluster-size', '2M', '--extended-l2');
      assert.match(sub.stdout, /^first write +16x/m);
      assert.match(sub.stdout, /32 subclusters of 64 KiB/);
    });
    it(`${CONTRACT} --access reads zipf(S) and "P% on Q%"`, async () => {
      for (const [access, shown] of [['zipf(1.1)', /zipf\(1\.1\) access/], ['90% on 10%', /90% on 10% access/]] as const) {
        const run = await cachewright('size', '--size', '20G', '--cache', '1M', '--access', access);
        assert.equal(run.code, 0, run.stderr);
        assert.match(run.stdout, shown);
      }
    });
    it(`${CONTRACT} -h, --help and --version work before or after the command`, async () => {
      for (const argv of [['--help', 'size'], ['size', '-h'], ['-h', 'size'], ['size', '--size', '20G', '--help']]) {
        const run = await cachewright(...argv);
        assert.equal(run.code, 0, argv.join(' '));
        assert.match(run.stdout, /^usage: cachewright size /, argv.join(' '));
      }
      for (const argv of [['--version'], ['size', '--version'], ['--version', 'lint']]) {
        const run = await cachewright(...argv);
        assert.equal(run.code, 0, argv.join(' '));
        assert.match(run.stdout, /^\d+\.\d+\.\d+\n$/, argv.join(' '));
      }
    });
    it('--help prints the usage and exits 0', async () => {
      const run = await cachewright('size', '--help');
      assert.equal(run.code, 0);
      assert.match(run.stdout, /--size/);
      assert.match(run.stdout, /--cluster-size/);
    });
  });

  describe('bad input: a clear message on stderr, exit 2, no stack trace', () => {
    for (const [title, args, fragments] of BAD_INPUT) {
      it(`${title}: cachewright size ${args.join(' ')}`, async () => {
        const run = await cachewright('size', ...args);
        assert.equal(run.code, 2, `exit code; stderr: ${run.stderr}`);
        assert.equal(run.stdout, '', 'nothing on stdout');
        const firstLine = run.stderr.split('\n')[0] ?? '';
        assert.match(firstLine, /^cachewright size: /);
        for (const fragment of fragments) assert.ok(firstLine.includes(fragment), `${JSON.stringify(firstLine)} should mention ${JSON.stringify(fragment)}`);
        assert.doesNotMatch(run.stderr + run.stdout, STACK_FRAME);
        assert.doesNotMatch(run.stderr, /internal error|TypeError|RangeError|SyntaxError/);
      });
    }
    it(`${CONTRACT} an unknown command exits 2 with the command named`, async () => {
      const run = await cachewright('sizes', '--size', '20G');
      assert.equal(run.code, 2);
      assert.match(run.stderr, /unknown command "sizes"/);
      assert.doesNotMatch(run.stderr + run.stdout, STACK_FRAME);
    });
  });
});

describe('cli: cachewright size in process', () => {
  it(`${CONTRACT} property: any argv gives exit 0 with output, or exit 2 with a message; never an exception`, () => {
    const token = fc.oneof(
      fc.constantFrom('--size', '--cluster-size', '--extended-l2', '--cache-entry-size', '--refcount-bits', '--cache',
        '--request-size', '--driver', '--platform', '--format', 'json', 'text', 'legacy', 'other', '--', '-', '--size='),
      fc.constantFrom('20G', '0', '-1', '1.5', '64K', '4KB', '2M', '3000', '512', '16', '2048P', '1e3', ''),
      fc.string({ maxLength: 6 }),
    );
    fc.assert(fc.property(fc.array(token, { maxLength: 8 }), (argv) => {
      let stdout = '';
      let stderr = '';
      const io: CommandIO = { stdout: (t) => { stdout += t; }, stderr: (t) => { stderr += t; }, cwd: process.cwd(), stderrIsTTY: false };
      const code = runSize(argv, io);
      if (code === 0) assert.ok(stdout.length > 0 && stderr === '');
      else {
        assert.equal(code, 2);
        assert.match(stderr, /^cachewright size: \S/);
        assert.equal(stdout, '');
      }
    }), { numRuns: 300 });
  });
});
