// Cache entry index -> dense id (0, 1, 2, ... in order of first touch). An open-addressing table over
// typed arrays: a trace of millions of lookups over a hundred thousand entries costs a few megabytes
// and no per-entry objects, which a Map of numbers would allocate.
import { atIndex } from '../core/indexed';

const EMPTY = -1;

/** Mixes the two 32-bit halves of an entry index into a 32-bit hash (multiply-xorshift finaliser). */
export function mixEntryIndex(key: number, seed: number): number {
  const low = key >>> 0;
  const high = Math.floor(key / 4294967296) >>> 0;
  let h = Math.imul(low ^ seed, 0x85ebca6b) ^ Math.imul(high + 0x9e3779b9, 0xc2b2ae35);
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

export class KeyTable {
  private keys: Float64Array;
  private ids: Int32Array;
  private mask: number;
  /** Distinct keys seen; also the id the next new key gets. */
  size = 0;

  constructor(initialCapacity = 1 << 12) {
    let capacity = 16;
    while (capacity < initialCapacity * 2) capacity *= 2;
    this.keys = new Float64Array(capacity);
    this.ids = new Int32Array(capacity).fill(EMPTY);
    this.mask = capacity - 1;
  }

  /** The id of `key`, giving it the next id when it is new (a new key's id equals the size before). */
  idOf(key: number): number {
    let slot = mixEntryIndex(key, 0x2545f491) & this.mask;
    for (;;) {
      const id = atIndex(this.ids, slot);
      if (id === EMPTY) break;
      if (this.keys[slot] === key) return id;
      slot = (slot + 1) & this.mask;
    }
    const id = this.size++;
    this.keys[slot] = key;
    this.ids[slot] = id;
    if (this.size * 2 > this.ids.length) this.grow();
    return id;
  }

  /** Every key with its id, for callers that need the entries back (tests, per-entry counts). */
  *entries(): IterableIterator<[key: number, id: number]> {
    for (let slot = 0; slot < this.ids.length; slot++) {
      const id = atIndex(this.ids, slot);
      if (id !== EMPTY) yield [atIndex(this.keys, slot), id];
    }
  }

  private grow(): void {
    const oldKeys = this.keys;
    const oldIds = this.ids;
    const capacity = oldIds.length * 2;
    this.keys = new Float64Array(capacity);
    this.ids = new Int32Array(capacity).fill(EMPTY);
    this.mask = capacity - 1;
    for (let old = 0; old < oldIds.length; old++) {
      const id = atIndex(oldIds, old);
      if (id === EMPTY) continue;
      const key = atIndex(oldKeys, old);
      let slot = mixEntryIndex(key, 0x2545f491) & this.mask;
      while ((atIndex(this.ids, slot)) !== EMPTY) slot = (slot + 1) & this.mask;
      this.keys[slot] = key;
      this.ids[slot] = id;
    }
  }
}
