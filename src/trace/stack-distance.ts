// Exact LRU stack distances in one pass [MATTSON]: LRU has the inclusion property, so the distance of
// a lookup (how many other distinct entries were looked up since this entry's previous lookup) decides
// at once for every cache size whether it hits: a cache of C entries hits exactly the lookups with
// distance < C. The distance is counted with a Fenwick tree over last-access times: each entry marks
// the time of its latest lookup, so the marks after an entry's previous time are the entries used
// since. That is O(log T) per lookup with T time slots.
//
// Memory follows the distinct entries M, not the trace length: when the time axis is full, the live
// marks (one per entry) are renumbered 0..M-1 in order, and the axis doubles only when more than half
// of it is live. Each compaction costs O(T) and buys at least T/2 lookups, so it is O(1) amortised.

import { KeyTable } from './key-table';
import { atIndex } from '../core/indexed';

const INITIAL_TIME_SLOTS = 1 << 16;

export class StackDistances {
  private readonly keys = new KeyTable();
  /** Per entry id: the time slot of its latest lookup. */
  private lastTime = new Int32Array(1 << 12);
  /** Per time slot: the entry id looked up then (stale once that entry is looked up again). */
  private owner = new Int32Array(INITIAL_TIME_SLOTS);
  /** Fenwick tree over time slots (1-based): one mark per entry, at its latest lookup. */
  private tree = new Int32Array(INITIAL_TIME_SLOTS + 1);
  private slots = INITIAL_TIME_SLOTS;
  private now = 0;
  /** histogram[d]: lookups at stack distance d (0 = the entry looked up just before). */
  private histogram = new Float64Array(1 << 12);
  lookups = 0;
  firstTouches = 0;

  /** Distinct entries looked up so far. */
  get entries(): number {
    return this.keys.size;
  }

  /** Looks up cache entry `key` (any non-negative integer below 2^53). */
  lookup(key: number): void {
    this.lookups++;
    // Compact first, while every entry's mark matches its last time.
    if (this.now === this.slots) this.compact();
    const before = this.keys.size;
    const id = this.keys.idOf(key);
    if (id === before) {
      this.firstTouches++;
      if (id >= this.lastTime.length) this.growEntries();
    } else {
      const previous = atIndex(this.lastTime, id);
      // Marks at times 0..previous, the entry's own included; every other mark came later.
      let marksUpTo = 0;
      for (let i = previous + 1; i > 0; i &= i - 1) marksUpTo += atIndex(this.tree, i);
      const distance = before - marksUpTo;
      this.histogram[distance] = (atIndex(this.histogram, distance)) + 1;
      for (let i = previous + 1; i <= this.slots; i += i & -i) this.tree[i] = (atIndex(this.tree, i)) - 1;
    }
    const time = this.now++;
    for (let i = time + 1; i <= this.slots; i += i & -i) this.tree[i] = (atIndex(this.tree, i)) + 1;
    this.owner[time] = id;
    this.lastTime[id] = time;
  }

  /** Lookups per stack distance, index 0 .. entries - 1 (a copy). */
  distanceHistogram(): Float64Array {
    return this.histogram.slice(0, Math.max(1, this.keys.size));
  }

  /** Every entry touched, with its id (ids count from 0 in order of first touch). */
  touchedEntries(): IterableIterator<[key: number, id: number]> {
    return this.keys.entries();
  }

  private growEntries(): void {
    const capacity = this.lastTime.length * 2;
    const lastTime = new Int32Array(capacity);
    lastTime.set(this.lastTime);
    this.lastTime = lastTime;
    const histogram = new Float64Array(capacity);
    histogram.set(this.histogram);
    this.histogram = histogram;
  }

  /** Renumbers the live marks 0..M-1 in time order; doubles the axis when it would be over half full. */
  private compact(): void {
    const live = this.keys.size;
    let kept = 0;
    // In place: slot `kept` never runs ahead of the slot being read.
    for (let time = 0; time < this.now; time++) {
      const id = atIndex(this.owner, time);
      if (this.lastTime[id] !== time) continue;
      this.owner[kept] = id;
      this.lastTime[id] = kept;
      kept++;
    }
    if (live * 2 > this.slots) {
      this.slots *= 2;
      const owner = new Int32Array(this.slots);
      owner.set(this.owner.subarray(0, kept));
      this.owner = owner;
      this.tree = new Int32Array(this.slots + 1);
    }
    // Marks at slots 1..kept (1-based): node i covers (i - lowbit(i), i].
    const tree = this.tree;
    for (let i = 1; i <= this.slots; i++) {
      const low = i - (i & -i);
      tree[i] = low >= kept ? 0 : Math.min(i, kept) - low;
    }
    this.now = kept;
  }
}
