// Generated request sequences through the request mapper and the stack-distance engine, against the
// issue's lookup rule written independently (helpers.lookupsOf) replayed through a general-purpose
// LRU library [lru-cache] at a generated cache size: hit counts, first touches and lookups equal.
import { strict as assert } from 'node:assert';
import fc from 'fast-check';
import { RequestMapper, guestBytesPerEntry, type TraceGeometry } from '../../../src/trace/lookups';
import { HitProfile } from '../../../src/trace/profile';
import { StackDistances } from '../../../src/trace/stack-distance';
import { LRU_CACHE, MATTSON } from '../../helpers/sources';
import { libraryHits, lookupsOf, type Request } from './helpers';

const RUNS = 300;

const geometry = fc.record({
  clusterBits: fc.integer({ min: 9, max: 16 }),
  entryShift: fc.integer({ min: 0, max: 3 }),
  extendedL2: fc.boolean(),
});

describe('trace engine: generated request sequences', function () {
  this.timeout(120_000);

  it(`${LRU_CACHE} ${MATTSON} any requests, any geometry, any cache size: the same hits, lookups and first touches (${RUNS} runs)`, () => {
    let ran = 0;
    fc.assert(
      fc.property(
        geometry,
        fc.array(fc.record({ offset: fc.nat({ max: 2 ** 26 }), length: fc.integer({ min: 1, max: 2 ** 20 }) }), { minLength: 1, maxLength: 400 }),
        fc.integer({ min: 1, max: 300 }),
        ({ clusterBits, entryShift, extendedL2 }, raw, capacity) => {
          const clusterSize = 2n ** BigInt(clusterBits);
          // extended L2 needs clusters of at least 16 KiB [SPEC]
          fc.pre(!extendedL2 || clusterBits >= 14);
          const entryBytes = clusterSize >> BigInt(Math.min(entryShift, clusterBits - 9));
          const g: TraceGeometry = { virtualSize: 2n ** 27n, clusterSize, extendedL2, cacheEntryBytes: entryBytes };
          const distances = new StackDistances();
          const mapper = new RequestMapper(g, distances);
          for (const { offset, length } of raw) mapper.request(offset, length);
          const profile = HitProfile.of(distances, distances.lookups, 1);
          const requests: Request[] = raw.map((r) => ({ ...r, op: 'read' }));
          const keys = lookupsOf(requests, Number(guestBytesPerEntry(g)));
          assert.equal(mapper.lookups, keys.length);
          assert.equal(profile.firstTouches, new Set(keys).size);
          assert.equal(Math.round(profile.hitRatio(capacity) * keys.length), libraryHits(keys, capacity));
          ran++;
        },
      ),
      { numRuns: RUNS },
    );
    assert.ok(ran >= RUNS * 0.7, `${ran} of ${RUNS} generated cases ran`);
  });
});
