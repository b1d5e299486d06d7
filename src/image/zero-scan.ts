// Finding the few non-zero entries of a sparse L2 table fast. Every byte of every allocated table
// must be looked at, which in plain JavaScript costs about as much as reading the table; a tiny
// WebAssembly function with 128-bit SIMD compares 128 bytes per step instead. Both paths give the
// same answer: the byte offsets of the non-zero 16-byte blocks of a table.
import { atIndex } from '../core/indexed';

export interface BlockScanner {
  /** Buffers to read tables into; `scan` looks at one of them. */
  readonly buffers: Uint8Array[];
  /** Offsets of the non-zero 16-byte blocks in `buffers[slot]` (the first `count` are valid). */
  scan(slot: number): { offsets: Int32Array; count: number };
}

const unsigned = (n: number): number[] => {
  const out: number[] = [];
  do {
    let byte = n & 0x7f;
    n >>>= 7;
    if (n !== 0) byte |= 0x80;
    out.push(byte);
  } while (n !== 0);
  return out;
};
const signed = (n: number): number[] => {
  const out: number[] = [];
  for (;;) {
    const byte = n & 0x7f;
    n >>= 7;
    if ((n === 0 && (byte & 0x40) === 0) || (n === -1 && (byte & 0x40) !== 0)) return [...out, byte];
    out.push(byte | 0x80);
  }
};
const vector = (items: number[][]): number[] => [...unsigned(items.length), ...items.flat()];
const section = (id: number, body: number[]): number[] => [id, ...unsigned(body.length), ...body];
const name = (text: string): number[] => vector([...text].map((c) => [c.charCodeAt(0)]));

/*
 * (func $scan (param $p i32) (param $end i32) (param $out i32) (result i32) (local $n i32)
 *   block $done
 *     loop $next
 *       (br_if $done (i32.ge_u $p $end))
 *       (if (v128.any_true (v128.or ... (v128.or (load $p) (load $p+16)) ... (load $p+112)))
 *         for k in 0..7: (if (v128.any_true (load $p+16k)) (store $out+4n ($p+16k)) (n++)))
 *       (p += 128) (br $next)))
 *   $n)
 */
/** 16-byte vectors ORed per step: 8 (128 bytes; every table is a multiple of 512 bytes). */
const VECTORS_PER_STEP = 8;

function scanModuleBytes(): Uint8Array<ArrayBuffer> {
  const I32 = 0x7f;
  const get = (i: number): number[] => [0x20, i];
  const set = (i: number): number[] => [0x21, i];
  const i32 = (n: number): number[] => [0x41, ...signed(n)];
  const load = (offset: number): number[] => [...get(0), 0xfd, 0x00, 0x00, ...unsigned(offset)]; // v128.load
  const or = [0xfd, 0x50];
  const anyTrue = [0xfd, 0x53];
  const one = (k: number): number[] => [
    ...load(16 * k), ...anyTrue, 0x04, 0x40,
    ...get(2), ...get(3), ...i32(2), 0x74, 0x6a, // out + n * 4
    ...get(0), ...i32(16 * k), 0x6a, // p + 16k
    0x36, 0x02, 0x00, // i32.store
    ...get(3), ...i32(1), 0x6a, ...set(3),
    0x0b,
  ];
  const body = [
    ...vector([[1, I32]]), // one local: $n
    0x02, 0x40, 0x03, 0x40,
    ...get(0), ...get(1), 0x4f, 0x0d, 0x01, // br_if $done
    ...load(0), ...Array.from({ length: VECTORS_PER_STEP - 1 }, (_, k) => [...load(16 * (k + 1)), ...or]).flat(), ...anyTrue,
    0x04, 0x40, ...Array.from({ length: VECTORS_PER_STEP }, (_, k) => one(k)).flat(), 0x0b,
    ...get(0), ...i32(16 * VECTORS_PER_STEP), 0x6a, ...set(0),
    0x0c, 0x00, // br $next
    0x0b, 0x0b,
    ...get(3),
    0x0b,
  ];
  return new Uint8Array([
    0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00,
    ...section(1, vector([[0x60, ...vector([[I32], [I32], [I32]]), ...vector([[I32]])]])),
    ...section(2, vector([[...name('e'), ...name('m'), 0x02, 0x00, 0x01]])), // imported memory, at least 1 page
    ...section(3, vector([[0x00]])),
    ...section(7, vector([[...name('scan'), 0x00, 0x00]])),
    ...section(10, vector([[...unsigned(body.length), ...body]])),
  ]);
}

let compiled: WebAssembly.Module | null | undefined;
function scanModule(): WebAssembly.Module | null {
  if (compiled === undefined) {
    try {
      const bytes = scanModuleBytes();
      compiled = typeof WebAssembly === 'object' && WebAssembly.validate(bytes) ? new WebAssembly.Module(bytes) : null;
    } catch {
      compiled = null;
    }
  }
  return compiled;
}

const PAGE = 65536;

/** A scanner for tables of `tableBytes` (a multiple of 128), with `slots` buffers. */
export function createBlockScanner(tableBytes: number, slots: number, preferJs = false): BlockScanner {
  const module = preferJs ? null : scanModule();
  if (module) {
    const outBytes = (tableBytes / 16) * 4;
    const pages = Math.ceil((tableBytes * slots + outBytes) / PAGE);
    const memory = new WebAssembly.Memory({ initial: pages, maximum: pages });
    const instance = new WebAssembly.Instance(module, { e: { m: memory } });
    const scan = instance.exports.scan as (p: number, end: number, out: number) => number;
    const outAt = tableBytes * slots;
    const buffers = Array.from({ length: slots }, (_, i) => new Uint8Array(memory.buffer, i * tableBytes, tableBytes));
    const found = new Int32Array(memory.buffer, outAt, tableBytes / 16);
    const offsets = new Int32Array(tableBytes / 16);
    return {
      buffers,
      scan(slot) {
        const base = slot * tableBytes;
        const count = scan(base, base + tableBytes, outAt);
        for (let i = 0; i < count; i++) offsets[i] = atIndex(found, i) - base;
        return { offsets, count };
      },
    };
  }
  const buffers = Array.from({ length: slots }, () => new Uint8Array(new ArrayBuffer(tableBytes)));
  const words = buffers.map((b) => new Int32Array(b.buffer));
  const offsets = new Int32Array(tableBytes / 16);
  return {
    buffers,
    scan(slot) {
      const w = atIndex(words, slot);
      let count = 0;
      // A word read by index is `number | undefined` to the compiler; comparing it with 0 needs no
      // assertion, and every index here is inside the table (its length is a multiple of 16 words).
      for (let k = 0; k < w.length; k += 4) {
        if (w[k] !== 0 || w[k + 1] !== 0 || w[k + 2] !== 0 || w[k + 3] !== 0) offsets[count++] = k * 4;
      }
      return { offsets, count };
    },
  };
}

// Walks reuse scanners (and their WebAssembly memory) instead of making one each: a new memory
// per walk costs an allocation the collector then has to account for. A scanner is only ever
// used by one walk at a time.
const idle = new Map<string, BlockScanner[]>();
const KEEP_IDLE = 2;

export function acquireBlockScanner(tableBytes: number, slots: number): BlockScanner {
  const free = idle.get(`${tableBytes}/${slots}`);
  return free?.pop() ?? createBlockScanner(tableBytes, slots);
}

export function releaseBlockScanner(scanner: BlockScanner): void {
  const first = scanner.buffers[0];
  if (!first) return;
  const key = `${first.length}/${scanner.buffers.length}`;
  const free = idle.get(key) ?? [];
  if (free.length < KEEP_IDLE) free.push(scanner);
  idle.set(key, free);
}
