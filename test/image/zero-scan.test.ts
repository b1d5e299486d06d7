// The SIMD zero-block scanner and its plain JavaScript fallback against a naive byte loop, on
// generated sparse tables: both must list exactly the non-zero 16-byte blocks, in order.
import { strict as assert } from 'node:assert';
import fc from 'fast-check';
import { createBlockScanner } from '../../src/image/zero-scan';

const naive = (bytes: Uint8Array): number[] => {
  const out: number[] = [];
  for (let block = 0; block < bytes.length; block += 16) if (bytes.subarray(block, block + 16).some((b) => b !== 0)) out.push(block);
  return out;
};

describe('zero-block scanner', () => {
  for (const preferJs of [false, true]) {
    it(`${preferJs ? 'JavaScript fallback' : 'WebAssembly SIMD'}: the same blocks as a byte loop`, () => {
      for (const size of [512, 4096, 65536]) {
        const scanner = createBlockScanner(size, 3, preferJs);
        fc.assert(
          fc.property(fc.integer({ min: 0, max: 2 }), fc.array(fc.tuple(fc.integer({ min: 0, max: size - 1 }), fc.integer({ min: 1, max: 255 })), { maxLength: 40 }), (slot, writes) => {
            const buffer = scanner.buffers[slot]!;
            buffer.fill(0);
            for (const [at, value] of writes) buffer[at] = value;
            const { offsets, count } = scanner.scan(slot);
            assert.deepEqual(Array.from(offsets.subarray(0, count)), naive(buffer));
          }),
          { numRuns: 200 },
        );
      }
    });
  }
});
