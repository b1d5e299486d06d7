// From guest requests to L2 cache lookups (docs/sources.md "Measured curves from I/O traces"): a request
// (offset, length) touches clusters floor(offset/cs) .. floor((offset+length-1)/cs); cluster k sits in
// cache entry floor(k / (entryBytes / l2EntryWidth)). The driver looks each distinct cache entry up
// once per request, in ascending order (common practice). Dividing by the guest bytes one cache entry
// maps gives the same entries in one step: floor(floor(x/a)/b) = floor(x/(a*b)).

import { l2EntryBytes } from '../core/sizing';

export interface TraceGeometry {
  virtualSize: bigint;
  clusterSize: bigint;
  extendedL2: boolean;
  /** Bytes of one L2 cache entry: the cluster size for whole L2 tables, or the slice size. */
  cacheEntryBytes: bigint;
}

/** Receives cache entry lookups, each entry an index from guest offset 0. */
export interface LookupSink {
  lookup(entry: number): void;
}

/** Receives guest requests in bytes (reads, writes and discards only). */
export interface RequestSink {
  request(offset: number, length: number): void;
}

/** Guest bytes one cache entry maps. */
export function guestBytesPerEntry(geometry: TraceGeometry): bigint {
  return (geometry.cacheEntryBytes / l2EntryBytes(geometry.extendedL2)) * geometry.clusterSize;
}

export class RequestMapper implements RequestSink {
  /** Requests inside the disk, each looked up. */
  requests = 0;
  /** Requests that run past the virtual size: counted, not looked up (the trace is of another disk). */
  pastEnd = 0;
  lookups = 0;
  /** The guest bytes the looked-up requests fall in: lowest offset, highest end (0, 0 before any). */
  lowest = Number.POSITIVE_INFINITY;
  highestEnd = 0;
  /** Guest bytes one cache entry maps. */
  private readonly entryReach: number;
  private readonly size: number;

  constructor(geometry: TraceGeometry, private readonly sink: LookupSink) {
    this.entryReach = Number(guestBytesPerEntry(geometry));
    this.size = Number(geometry.virtualSize);
  }

  request(offset: number, length: number): void {
    if (!(length > 0)) return; // a flush-like request of no bytes looks nothing up
    const end = offset + length;
    if (end > this.size) {
      this.pastEnd++;
      return;
    }
    this.requests++;
    if (offset < this.lowest) this.lowest = offset;
    if (end > this.highestEnd) this.highestEnd = end;
    const first = Math.floor(offset / this.entryReach);
    const last = Math.floor((end - 1) / this.entryReach);
    for (let entry = first; entry <= last; entry++) this.sink.lookup(entry);
    this.lookups += last - first + 1;
  }
}
