// The one-pass stack-distance engine against a general-purpose LRU library replaying the same
// lookups at several sizes [lru-cache], and against the independent reference model's C/N [IRM].
import { strict as assert } from 'node:assert';
import { LRUCache } from 'lru-cache';
import { HitProfile } from '../../../src/trace/profile';
import { StackDistances } from '../../../src/trace/stack-distance';
import { mulberry32, zipfSampler } from '../cachemodel/lru-simulation';
import { IRM, LRU_CACHE, MATTSON } from '../../helpers/sources';

/** Hits of a cache of `capacity` entries replaying `keys` through the library's LRU. */
function libraryHits(keys: ArrayLike<number>, capacity: number): number {
  const cache = new LRUCache<number, true>({ max: capacity });
  let hits = 0;
  for (let i = 0; i < keys.length; i++) {
    const key = keys[i] as number;
    if (cache.get(key) !== undefined) hits++;
    else cache.set(key, true);
  }
  return hits;
}

function profileOf(keys: ArrayLike<number>): HitProfile {
  const distances = new StackDistances();
  for (let i = 0; i < keys.length; i++) distances.lookup(keys[i] as number);
  return HitProfile.of(distances, distances.lookups, 1);
}

const hitsAt = (profile: HitProfile, entries: number): number => Math.round(profile.hitRatio(entries) * profile.lookups);

describe('trace engine: exact LRU stack distances', function () {
  this.timeout(60_000);

  it(`${LRU_CACHE} ${MATTSON} uniform keys over 3,000 entries, 400k lookups (the time axis compacts many times): hit counts equal at 8 sizes`, () => {
    const random = mulberry32(7);
    const keys = Float64Array.from({ length: 400_000 }, () => Math.floor(random() * 3000) * 977 + 2 ** 40);
    const profile = profileOf(keys);
    for (const capacity of [1, 2, 3, 17, 256, 1000, 2999, 3000]) {
      assert.equal(hitsAt(profile, capacity), libraryHits(keys, capacity), `capacity ${capacity}`);
    }
  });

  it(`${LRU_CACHE} ${MATTSON} Zipf s=0.9 over 100,000 entries, 300k lookups (the axis grows past 65,536 slots): hit counts equal at 6 sizes`, () => {
    const draw = zipfSampler(100_000, 0.9, mulberry32(11));
    const keys = Float64Array.from({ length: 300_000 }, () => draw());
    const profile = profileOf(keys);
    for (const capacity of [1, 10, 1000, 30_000, 70_000, 100_000]) {
      assert.equal(hitsAt(profile, capacity), libraryHits(keys, capacity), `capacity ${capacity}`);
    }
  });

  it(`${LRU_CACHE} a cyclic scan over C+1 entries misses every lookup in a cache of C, hits all in C+1`, () => {
    const keys = Float64Array.from({ length: 50_000 }, (_, i) => i % 501);
    const profile = profileOf(keys);
    assert.equal(hitsAt(profile, 500), libraryHits(keys, 500));
    assert.equal(hitsAt(profile, 500), 0);
    assert.equal(hitsAt(profile, 501), 50_000 - 501);
    assert.equal(profile.firstTouches, 501);
  });

  it(`${IRM} uniform random lookups over N = 5,000 entries: hit ratio C/N within 1% at C = N/10, N/4, N/2, 3N/4`, () => {
    const n = 5000;
    const random = mulberry32(3);
    const distances = new StackDistances();
    const lookups = 4_000_000;
    for (let i = 0; i < lookups; i++) distances.lookup(Math.floor(random() * n));
    const profile = HitProfile.of(distances, distances.lookups, 1);
    for (const c of [n / 10, n / 4, n / 2, (3 * n) / 4]) {
      const measured = profile.hitRatio(c);
      assert.ok(Math.abs(measured - c / n) <= 0.01, `C=${c}: ${measured} vs ${c / n}`);
    }
  });
});
