// `npm run fuzz`: a seeded mutation fuzzer built on fast-check (no coverage-guided fuzzer on the
// registry installs without downloading a native part at install time). For each target in
// targets.ts it mutates the corpus (seeds and inputs that once found bugs) with byte flips,
// interesting integers at aligned places, insertions, deletions and copied spans, for a time box,
// and shrinks any failure to a small input that it writes to test/fuzz-corpus/<target>/ so that
// `npm test` replays it from then on.
//   npx tsx test/fuzz/run.ts [--seconds N per target] [--seed N] [--target NAME]
import * as crypto from 'node:crypto';
import * as fs from 'node:fs';
import * as path from 'node:path';
import fc from 'fast-check';
import { CORPUS, TARGETS, type FuzzTarget } from './targets';

function option(name: string): string | undefined {
  const at = process.argv.indexOf(`--${name}`);
  return at === -1 ? undefined : process.argv[at + 1];
}
const SECONDS = Number(option('seconds') ?? 30);
const SEED = option('seed') === undefined ? Date.now() % 2 ** 31 : Number(option('seed'));
const ONLY = option('target');

/** Values that sit at the edges of fields: zero, all ones, sign bits, powers of two. */
const INTERESTING = [0n, 1n, 0x7fn, 0x80n, 0xffn, 0x7fffn, 0x8000n, 0xffffn, 0x7fffffffn, 0x80000000n, 0xffffffffn, 1n << 53n, (1n << 63n) - 1n, 1n << 63n, (1n << 64n) - 1n];

type Mutation =
  | { kind: 'flip'; at: number; bit: number }
  | { kind: 'byte'; at: number; value: number }
  | { kind: 'integer'; at: number; width: 1 | 2 | 4 | 8; value: bigint }
  | { kind: 'insert'; at: number; bytes: Uint8Array }
  | { kind: 'delete'; at: number; length: number }
  | { kind: 'copy'; from: number; to: number; length: number };

const position = fc.nat({ max: 0xffff_ffff });
const mutation: fc.Arbitrary<Mutation> = fc.oneof(
  fc.record({ kind: fc.constant('flip' as const), at: position, bit: fc.nat({ max: 7 }) }),
  fc.record({ kind: fc.constant('byte' as const), at: position, value: fc.oneof(fc.nat({ max: 255 }), fc.constantFrom(0x0a, 0x22, 0x27, 0x2c, 0x3a, 0x5b, 0x7b, 0x2a, 0x26, 0x23)) }),
  fc.record({ kind: fc.constant('integer' as const), at: position, width: fc.constantFrom(1 as const, 2 as const, 4 as const, 8 as const), value: fc.constantFrom(...INTERESTING) }),
  fc.record({ kind: fc.constant('insert' as const), at: position, bytes: fc.uint8Array({ maxLength: 16 }) }),
  fc.record({ kind: fc.constant('delete' as const), at: position, length: fc.nat({ max: 64 }) }),
  fc.record({ kind: fc.constant('copy' as const), from: position, to: position, length: fc.nat({ max: 256 }) }),
);

/** Applies mutations in order; positions wrap around the current length, integers are big-endian (as qcow2 stores them). */
export function mutate(seed: Buffer, mutations: readonly Mutation[]): Buffer {
  let bytes = Buffer.from(seed);
  for (const m of mutations) {
    const n = bytes.length;
    switch (m.kind) {
      case 'flip':
        if (n > 0) bytes[m.at % n]! ^= 1 << m.bit;
        break;
      case 'byte':
        if (n > 0) bytes[m.at % n] = m.value;
        break;
      case 'integer': {
        if (n < m.width) break;
        const at = Math.floor((m.at % (n - m.width + 1)) / m.width) * m.width;
        for (let i = 0; i < m.width; i++) bytes[at + i] = Number((m.value >> BigInt(8 * (m.width - 1 - i))) & 0xffn);
        break;
      }
      case 'insert': {
        const at = m.at % (n + 1);
        bytes = Buffer.concat([bytes.subarray(0, at), Buffer.from(m.bytes), bytes.subarray(at)]);
        break;
      }
      case 'delete': {
        if (n === 0) break;
        const at = m.at % n;
        bytes = Buffer.concat([bytes.subarray(0, at), bytes.subarray(Math.min(n, at + m.length))]);
        break;
      }
      case 'copy': {
        if (n === 0) break;
        const from = m.from % n;
        const span = Buffer.from(bytes.subarray(from, Math.min(n, from + m.length)));
        const to = m.to % n;
        span.copy(bytes, to, 0, Math.min(span.length, n - to));
        break;
      }
    }
  }
  return bytes;
}

export function corpusOf(target: FuzzTarget): Buffer[] {
  const dir = path.join(CORPUS, target.name);
  const files = fs.existsSync(dir) ? fs.readdirSync(dir).sort() : [];
  return [...target.seeds(), ...files.map((f) => fs.readFileSync(path.join(dir, f)))];
}

function save(target: FuzzTarget, input: Buffer): string {
  const dir = path.join(CORPUS, target.name);
  fs.mkdirSync(dir, { recursive: true });
  const file = path.join(dir, `found-${crypto.createHash('sha256').update(input).digest('hex').slice(0, 16)}`);
  fs.writeFileSync(file, input);
  return file;
}

async function fuzz(target: FuzzTarget): Promise<boolean> {
  const corpus = corpusOf(target);
  const input = fc.tuple(fc.nat({ max: corpus.length - 1 }), fc.array(mutation, { minLength: 1, maxLength: 8 })).map(([index, mutations]) => mutate(corpus[index]!, mutations));
  let runs = 0;
  const started = Date.now();
  const result = await fc.check(
    fc.asyncProperty(input, async (bytes) => {
      runs++;
      await target.check(bytes);
    }),
    { seed: SEED, numRuns: Number.MAX_SAFE_INTEGER, interruptAfterTimeLimit: SECONDS * 1000, markInterruptAsFailure: false, endOnFailure: false },
  );
  const seconds = ((Date.now() - started) / 1000).toFixed(0);
  if (!result.failed) {
    console.log(`${target.name}: ${runs} inputs in ${seconds} s from ${corpus.length} corpus entries, no invariant broken (seed ${SEED})`);
    return true;
  }
  const [found] = result.counterexample ?? [];
  const file = found ? save(target, found) : '(no counterexample)';
  console.log(`${target.name}: invariant broken after ${runs} inputs (seed ${SEED}): ${String(result.errorInstance)}`);
  console.log(`  shrunk input saved to ${path.relative(process.cwd(), file)}; npm test replays it from now on`);
  return false;
}

async function main(): Promise<void> {
  const targets = TARGETS.filter((t) => ONLY === undefined || t.name === ONLY);
  if (targets.length === 0) throw new Error(`no fuzz target "${ONLY}"; targets: ${TARGETS.map((t) => t.name).join(', ')}`);
  let clean = true;
  for (const target of targets) clean = (await fuzz(target)) && clean;
  process.exitCode = clean ? 0 : 1;
}

if (require.main === module) void main();
