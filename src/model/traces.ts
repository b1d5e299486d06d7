// What the linter knows of the I/O traces a definition names. The front ends read the traces (only
// src/trace's readers touch them) and hand in measured curves; the linter itself stays pure. A curve
// depends on the traces and on the disk's geometry, so both make up the request.

export interface TraceGeometryKey {
  virtualSize: bigint;
  clusterSize: bigint;
  extendedL2: boolean;
  /** L2 cache entry size: the cluster size for whole tables, or the slice size. */
  cacheEntryBytes: bigint;
}

/** The traces of one disk, by absolute path in the order written, and the geometry to measure them with. */
export interface TraceRequest {
  paths: string[];
  geometry: TraceGeometryKey;
}

/** One string per distinct request: traces and geometry. */
export const traceRequestKey = (request: TraceRequest): string => {
  const g = request.geometry;
  return JSON.stringify([request.paths, String(g.virtualSize), String(g.clusterSize), g.extendedL2, String(g.cacheEntryBytes)]);
};

/** A measured hit-ratio curve, as the linter uses it. */
export interface MeasuredCurve {
  /** Requests looked up, and all cache lookups they made. */
  requests: number;
  lookups: number;
  /** 1 when exact; else the share of cache entries sampled. */
  sampleRate: number;
  /** Distinct cache entries touched times the entry size. */
  workingSet: bigint;
  /** The guest bytes the traced requests fall in, from the lowest offset to the highest end. */
  span: { start: bigint; end: bigint };
  /** The hit ratio of an L2 cache of this many bytes on the traced lookups. */
  hitRatioAt(cacheBytes: bigint): number;
  /** The smallest cache reaching `target`; `reached` false (and the working set) when none does. */
  smallestCacheFor(target: number): { cacheBytes: bigint; reached: boolean };
}

/** A disk's traces as read: the curve, or why there is none (the first trace that failed). */
export type TraceFacts = { curve: MeasuredCurve; problem?: undefined } | { curve?: undefined; problem: { message: string; path: string } };

/** Facts for a request, or undefined when the front end has not read the traces (yet). */
export type TraceLookup = (request: TraceRequest) => TraceFacts | undefined;
