// Sequential access: repeated passes over the working set in guest-I/O steps. Checked against a
// step-by-step LRU run of the same scan (each I/O looks up every cache entry it spans), with table
// geometry from the qcow2 specification [SPEC]: 512-byte clusters, one table maps 64 * 512 = 32 KiB.
import { strict as assert } from 'node:assert';
import { modelCache } from '../../../src/core/cachemodel';
import { LruCache } from './lru-simulation';

const SPAN = 32 * 1024;

/** Runs two passes and returns the second's hit ratio and misses per I/O. */
function scan(offset: number, length: number, io: number, capacity: number): { hitRatio: number; missesPerIo: number } {
  const cache = new LruCache(capacity);
  let ios = 0;
  let misses = 0;
  for (let pass = 0; pass < 2; pass++) {
    if (pass === 1) cache.resetCounts();
    ios = 0;
    misses = 0;
    for (let position = offset; position < offset + length; position += io) {
      const end = Math.min(position + io, offset + length);
      ios++;
      for (let entry = Math.floor(position / SPAN); entry <= Math.floor((end - 1) / SPAN); entry++) {
        if (!cache.access(entry)) misses++;
      }
    }
  }
  return { hitRatio: cache.hitRatio, missesPerIo: misses / ios };
}

describe('cachemodel: sequential access', () => {
  const cases: Array<[number, number, number]> = [
    [0, 40 * SPAN, 4096], // aligned, I/O divides the span: one miss per 8 I/Os
    [5000, 37 * SPAN + 123, 4096],
    [3 * SPAN + 1000, 50 * SPAN, 12288], // I/Os cross entry boundaries
    [777, 21 * SPAN, 3000],
    [SPAN / 2, 30 * SPAN, 49152], // I/Os larger than an entry's span
    [100, 3 * SPAN, 65536],
  ];

  it('one miss per entry per pass when the cache is smaller than the working set: matches the LRU run exactly', () => {
    for (const [offset, length, io] of cases) {
      const result = modelCache({
        virtualSize: BigInt(offset + length + SPAN), clusterSize: 512n, extendedL2: false, cacheBytes: 2n * 512n,
        workingSet: { offset: BigInt(offset), length: BigInt(length) }, ioSize: BigInt(io), access: { kind: 'sequential' },
      });
      assert.ok(result.ok);
      const reference = scan(offset, length, io, result.value.capacityEntries);
      const label = `offset ${offset} length ${length} io ${io}`;
      assert.ok(Math.abs(result.value.hitRatio - reference.hitRatio) < 1e-12, `${label}: ${result.value.hitRatio} vs ${reference.hitRatio}`);
      assert.ok(Math.abs(result.value.missesPer1000 - 1000 * reference.missesPerIo) < 1e-9, `${label}: misses`);
      assert.equal(result.value.method, 'sequential-scan');
    }
  });

  it('aligned 4 KiB I/O over 32 KiB entries: 125 misses per 1,000 I/Os, each reading one 512-byte table', () => {
    const result = modelCache({
      virtualSize: 40n * 32768n, clusterSize: 512n, extendedL2: false, cacheBytes: 4n * 512n, ioSize: 4096n, access: { kind: 'sequential' },
    });
    assert.ok(result.ok);
    assert.equal(result.value.missesPer1000, 125);
    assert.equal(result.value.hitRatio, 7 / 8);
    assert.equal(result.value.metadataBytesPerIo, 64);
  });

  it('a cache holding every entry of the scan hits every time after the first pass', () => {
    const [offset, length, io] = [5000, 37 * SPAN + 123, 4096];
    const result = modelCache({
      virtualSize: BigInt(offset + length), clusterSize: 512n, extendedL2: false, cacheBytes: 38n * 512n,
      workingSet: { offset: BigInt(offset), length: BigInt(length) }, ioSize: BigInt(io), access: { kind: 'sequential' },
    });
    assert.ok(result.ok);
    assert.equal(result.value.entries, 38); // bytes 5000 .. 1217538 touch tables 0..37
    assert.equal(result.value.hitRatio, 1);
    assert.equal(scan(offset, length, io, 38).hitRatio, 1);
  });
});
