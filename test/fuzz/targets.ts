// The readers fuzzed by `npm run fuzz` and replayed from test/fuzz-corpus by `npm test`: each target
// takes raw bytes and checks the invariants every reader of user input keeps (ARCHITECTURE.md):
// - no exception escapes, except the reader's own typed error (the qcow2 reader's ImageError, which
//   every caller turns into a problem naming the file);
// - a result is a value, or a problem with a message (and, for text, a position inside the text);
// - the work is bounded: the qcow2 walk reads at most what the file holds (times a small factor),
//   and no input makes the heap grow beyond a fixed allowance.
import { strict as assert } from 'node:assert';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { parseAccessSpec } from '../../src/core/cachemodel/access';
import { parseInterval, parseSize } from '../../src/core/units';
import { ImageError, MemoryByteSource, readHeader, walkMetadata, type ByteSource } from '../../src/image';
import { loadMapping } from '../../src/lint';
import { readTraceFile } from '../../src/trace/reader';
import { writeImage } from '../image/qcow2-writer';

export interface FuzzTarget {
  /** Also the corpus folder's name: test/fuzz-corpus/<name>/. */
  name: string;
  /** Valid inputs the mutations start from (written to the corpus as seed-* files). */
  seeds(): Buffer[];
  /** Throws an AssertionError when an invariant breaks. */
  check(input: Buffer): Promise<void>;
}

/** Heap growth any single input may cause, far above what a well-behaved reader needs here. */
const HEAP_ALLOWANCE = 256 * 1024 * 1024;

function assertMessage(message: string, what: string): void {
  assert.ok(typeof message === 'string' && message.trim().length > 0, `${what}: a problem says something`);
  assert.doesNotMatch(message, /\bundefined\b|\[object Object\]|\n\s+at /, `${what}: ${message}`);
}

async function bounded<T>(what: string, run: () => Promise<T> | T): Promise<T> {
  const before = process.memoryUsage().heapUsed;
  let result: T;
  try {
    result = await run();
  } catch (error) {
    if (error instanceof assert.AssertionError) throw error;
    throw new assert.AssertionError({ message: `${what}: an exception escaped: ${error instanceof Error ? `${error.name}: ${error.message}` : String(error)}` });
  }
  const grown = process.memoryUsage().heapUsed - before;
  assert.ok(grown < HEAP_ALLOWANCE, `${what}: the heap grew by ${grown} bytes`);
  return result;
}

// ---- the qcow2 reader ----

/** A memory source that counts the bytes asked for, so a file cannot make the walk read without end. */
class CountingSource implements ByteSource {
  asked = 0;
  private readonly inner: MemoryByteSource;
  constructor(private readonly bytes: Uint8Array) {
    this.inner = new MemoryByteSource(bytes);
  }
  size = async (): Promise<number> => this.bytes.length;
  read = async (offset: bigint | number, length: number): Promise<Uint8Array> => {
    this.asked += length;
    return this.inner.read(offset, length);
  };
}

function imageSeeds(): Buffer[] {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cachewright-fuzz-seed-'));
  try {
    const GiB = 1n << 30n;
    const specs = [
      { version: 2 as const, clusterBits: 16, virtualSize: 1n * GiB, clusters: [{ guest: 0, kind: 'data' as const }] },
      { version: 3 as const, clusterBits: 12, virtualSize: 64n << 20n, clusters: [{ guest: 1, kind: 'data' as const }, { guest: 7, kind: 'zero' as const }], backing: { name: 'base.qcow2', format: 'qcow2' } },
      { version: 3 as const, clusterBits: 14, virtualSize: 256n << 20n, extendedL2: true, clusters: [{ guest: 2, kind: 'data' as const }, { guest: 3, kind: 'compressed' as const }] },
    ];
    return specs.map((spec, i) => {
      const file = path.join(dir, `seed-${i}.qcow2`);
      writeImage(file, spec);
      return fs.readFileSync(file);
    });
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

const qcow2: FuzzTarget = {
  name: 'qcow2',
  seeds: imageSeeds,
  async check(input) {
    const source = new CountingSource(input);
    await bounded('qcow2 reader', async () => {
      try {
        const header = await readHeader(source);
        await walkMetadata(source, header);
      } catch (error) {
        if (!(error instanceof ImageError)) throw error;
        assertMessage(error.message, 'qcow2 reader');
      }
    });
    // The walk reads each table once: what it asks for stays within a few times the file.
    assert.ok(source.asked <= 4 * input.length + 4 * 1024 * 1024, `qcow2 reader asked for ${source.asked} bytes of a ${input.length}-byte file`);
  },
};

// ---- the mapping-file loader ----

const MAPPING_SEEDS = [
  `version: 1
include: ["fleet/**/*.yaml", "fleet/**/*.json"]
exclude: ["fleet/archive/**"]
machines: "$.vms[*]"
disks: "$.volumes[*]"
fields:
  machine: { name: "$.hostname", memory: "$.ram", host: "$.placement.hv" }
  disk:
    name: "$.label"
    size: "$.capacity"
    clusterSize: "$.block"
    format: "$.kind"
    l2Cache: "$.tuning.l2"
    cacheEntrySize: "$.tuning.slice"
    cleanupInterval: "$.tuning.sweep"
    image: "$.file"
    pattern: "$.io.pattern"
assume: { clusterSize: 64K, pattern: "zipf(0.9)", requestSize: 4K }
budget: { cacheShareOfMemory: 0.05 }
accept:
  - { rule: l2-cache-oversized, pointer: "/vms/3/volumes/0", file: "fleet/edge.json", reason: "headroom" }
`,
  '{"version": 1, "disks": "$.disks[?@.kind == \'qcow2\']", "fields": {"disk": {"size": "$[\'size\']", "backing": "$..base"}}}\n',
];

/** 1-based line and column inside the text (a column may sit one past a line's end). */
function assertInside(text: string, line: number, column: number, what: string): void {
  const lines = text.split(/\r\n|\r|\n/);
  assert.ok(Number.isInteger(line) && line >= 1 && line <= lines.length, `${what}: line ${line} of ${lines.length}`);
  assert.ok(Number.isInteger(column) && column >= 1 && column <= (lines[line - 1] ?? '').length + 1, `${what}: column ${column} on line ${line}`);
}

const mapping: FuzzTarget = {
  name: 'mapping',
  seeds: () => MAPPING_SEEDS.map((text) => Buffer.from(text)),
  async check(input) {
    const text = input.toString('utf8');
    const load = await bounded('mapping loader', () => loadMapping(text, '/fuzz/cachewright.yaml'));
    assert.ok(load.mapping !== undefined || load.problems.length > 0, 'mapping loader: neither a mapping nor a problem');
    for (const problem of load.problems) {
      assertMessage(problem.message, 'mapping loader');
      assertInside(text, problem.range.line, problem.range.column, `mapping problem "${problem.message}"`);
    }
  },
};

// ---- the size, interval and pattern parsers ----

const VALUE_SEEDS = ['64K', '2.5M', '1 GiB', '512', '1T', '10m', '90s', '1h', '600', 'random', 'zipf(1.2)', '90% on 10%', 'sequential', '0.5%'];

const values: FuzzTarget = {
  name: 'values',
  seeds: () => VALUE_SEEDS.map((text) => Buffer.from(text)),
  async check(input) {
    const text = input.toString('utf8');
    await bounded('value parsers', () => {
      const size = parseSize(text);
      if (size.ok) assert.ok(typeof size.value === 'bigint' && size.value >= 0n, `size ${String(size.value)} from ${JSON.stringify(text)}`);
      else assertMessage(size.error, 'size parser');
      const interval = parseInterval(text);
      if (interval.ok) assert.ok(Number.isFinite(interval.value) && interval.value >= 0, `interval ${interval.value} from ${JSON.stringify(text)}`);
      else assertMessage(interval.error, 'interval parser');
      const pattern = parseAccessSpec(text);
      if (!pattern.ok) assertMessage(pattern.error.message, 'pattern parser');
    });
  },
};

// ---- the trace readers ----

const TRACE_SEEDS = [
  'offset,length,op\n0,4096,read\n65536,8192,write\n1048576,512,trim\n',
  'fio version 2 iolog\n/dev/vdb add\n/dev/vdb open\n/dev/vdb read 0 4096\n/dev/vdb write 65536 4096\n/dev/vdb close\n',
  'fio version 3 iolog\n0 /dev/vdb add\n0 /dev/vdb open\n10 /dev/vdb read 4096 4096\n20 /dev/vdb write 8192 4096\n30 /dev/vdb close\n',
  '  8,16   1        1     0.000000000  1234  D   R 2048 + 8 [fio]\n  8,16   1        2     0.000100000  1234  C   R 2048 + 8 [0]\n  8,16   1        3     0.000200000  1234  D   W 4096 + 16 [fio]\n',
];

let traceDir: string | undefined;

const trace: FuzzTarget = {
  name: 'trace',
  seeds: () => TRACE_SEEDS.map((text) => Buffer.from(text)),
  async check(input) {
    traceDir ??= fs.mkdtempSync(path.join(os.tmpdir(), 'cachewright-fuzz-trace-'));
    const file = path.join(traceDir, 'input.trace');
    fs.writeFileSync(file, input);
    let requests = 0;
    const sink = {
      request(offset: number, length: number): void {
        requests++;
        assert.ok(Number.isFinite(offset) && offset >= 0 && Number.isFinite(length) && length > 0, `trace request ${offset}+${length}`);
      },
    };
    const result = await bounded('trace reader', () => readTraceFile(file, 'input.trace', sink));
    if (result.ok) assert.equal(result.value.requests, requests, 'the report counts the requests the sink received');
    else assertMessage(result.error, 'trace reader');
    // Every line is at most one request, and a request needs at least a few bytes of text.
    assert.ok(requests <= input.length / 3 + 1, `${requests} requests from ${input.length} bytes`);
  },
};

export const TARGETS: readonly FuzzTarget[] = [qcow2, mapping, values, trace];

export const CORPUS = path.resolve(__dirname, '..', 'fuzz-corpus');
