// The metadata walk [SPEC "Cluster mapping", "Extended L2 Entries"]: the active L1 table is read in
// bounded chunks and each allocated L2 table is read and counted one at a time (a few reads in
// flight), so memory depends on the cluster size only, never on the virtual size or the L1 size.
import { ImageError, throwIfAborted } from './errors';
import type { Qcow2Header } from './header';
import type { ByteSource } from './source';
import { L2Counter, type Tally } from './l2-counter';
import { acquireBlockScanner, releaseBlockScanner, type BlockScanner } from './zero-scan';
import { atIndex } from '../core/indexed';

export interface WalkProgress {
  /** L1 entries looked at so far, of `l1Total` (the entries that map the virtual size). */
  l1Done: number;
  l1Total: number;
  l2TablesRead: number;
}

export interface WalkOptions {
  signal?: AbortSignal;
  /** Called now and then during the walk and once at its end. */
  onProgress?: (progress: WalkProgress) => void;
  /** Regions of the allocation map (default 64, at most 4096). A region is never smaller than one cluster. */
  buckets?: number;
}

/** Share of each region of the virtual disk that this layer holds, for drawing. */
export interface AllocationMap {
  /** Guest bytes per region (the last region may be shorter). */
  regionBytes: bigint;
  /** Per region, 0..1: share whose data is stored in this layer (standard, compressed, subclusters). */
  data: number[];
  /** Per region, 0..1: share that reads as zeros through a zero flag. */
  zero: number[];
}

/** The counts of src/image/l2-counter's Tally (data clusters: standard + compressed, + standard with any
 * subcluster allocated; zero clusters: zero flag set; subclusters: extended L2 only), plus the table count. */
export interface MetadataSummary extends Tally {
  l2TablesAllocated: number;
  /** Guest bytes stored in this layer, and guest bytes reading as zeros through flags. */
  allocatedBytes: bigint;
  zeroBytes: bigint;
  allocation: AllocationMap;
  /** Inconsistencies that do not stop reading (reserved bits set, contradictory subcluster bits). */
  warnings: string[];
}

const L1_CHUNK_ENTRIES = 8192; // 64 KiB of L1 per read
const READS_IN_FLIGHT = 4;
const TWO_32 = 4294967296;
/** The one allocation map every front end shows: this many cells, each a whole number of clusters. */
export const ALLOCATION_MAP_CELLS = 64;
const DEFAULT_BUCKETS = ALLOCATION_MAP_CELLS;
const MAX_BUCKETS = 4096;
const YIELD_EVERY_MS = 8;

const hex = (n: number): string => `0x${n.toString(16)}`;

export async function walkMetadata(source: ByteSource, header: Qcow2Header, options: WalkOptions = {}): Promise<MetadataSummary> {
  throwIfAborted(options.signal);
  const scanner = acquireBlockScanner(Number(header.clusterSize), READS_IN_FLIGHT);
  try {
    return await walkWith(scanner, source, header, options);
  } finally {
    releaseBlockScanner(scanner);
  }
}

async function walkWith(scanner: BlockScanner, source: ByteSource, header: Qcow2Header, options: WalkOptions): Promise<MetadataSummary> {
  const { signal, onProgress } = options;
  const cluster = Number(header.clusterSize);
  const fileSize = Number(header.fileSize);
  const extended = header.extendedL2;
  const entryBytes = extended ? 16 : 8;
  const entriesPerTable = cluster / entryBytes;
  const virtualSize = header.virtualSize;
  const totalClustersBig = (virtualSize + header.clusterSize - 1n) / header.clusterSize;
  const totalClusters = Number(totalClustersBig);
  const l1Total = header.l1EntriesNeeded;
  const l1Start = Number(header.l1Offset);
  const l1End = l1Start + header.l1Entries * 8;

  // Regions: whole clusters each, at most `buckets` of them.
  const wanted = Math.min(MAX_BUCKETS, Math.max(1, Math.floor(options.buckets ?? DEFAULT_BUCKETS)));
  const clustersPerRegion = Math.max(1, Math.ceil(totalClusters / wanted));
  const regions = totalClusters === 0 ? 0 : Math.ceil(totalClusters / clustersPerRegion);
  const lastClusterBytes = Number(virtualSize - (totalClustersBig - 1n) * header.clusterSize);

  const summary: MetadataSummary = {
    l2TablesAllocated: 0,
    dataClustersAllocated: 0,
    standardClusters: 0,
    compressedClusters: 0,
    zeroClusters: 0,
    subclustersAllocated: 0,
    subclustersZero: 0,
    allocatedBytes: 0n,
    zeroBytes: 0n,
    allocation: { regionBytes: BigInt(clustersPerRegion) * header.clusterSize, data: [], zero: [] },
    warnings: [],
  };
  // Tables are read into the scanner's buffers; it finds the non-zero 16-byte blocks, and the
  // counter decodes only the entries in those.
  const counter = new L2Counter(header, scanner, totalClusters, clustersPerRegion, regions, lastClusterBytes);
  const warn = (what: string, where: string): void => {
    const seen = counter.oddities.get(what);
    if (seen) seen.count++;
    else counter.oddities.set(what, { count: 1, first: where });
  };

  // Where each L2 table sits, so a table referenced twice is an error rather than a loop of rereads:
  // this bounds the work by the file's size whatever the L1 table says.
  const tableOwners = new Map<number, number>();

  const checkTableOffset = (offset: number, l1Index: number): void => {
    // The message is built only when needed: formatting guest offsets for every table is not free.
    const where = (): string => `the L2 table of L1 entry ${l1Index} (guest offset ${hex(l1Index * entriesPerTable * cluster)})`;
    if (offset % cluster !== 0) throw new ImageError('malformed', `${where()} is at ${hex(offset)}, not aligned to the ${cluster}-byte cluster size`);
    if (offset + cluster > fileSize) throw new ImageError('malformed', `${where()} is at ${hex(offset)}, past the end of the file (${fileSize} bytes)`);
    if (offset < l1End && offset + cluster > l1Start) throw new ImageError('malformed', `${where()} overlaps the L1 table`);
    const owner = tableOwners.get(offset);
    if (owner !== undefined) throw new ImageError('malformed', `${where()} is at ${hex(offset)}, the same place as the L2 table of L1 entry ${owner}`);
    tableOwners.set(offset, l1Index);
  };

  const readTable = async (offset: number, slot: number): Promise<number> => {
    const buffer = atIndex(scanner.buffers, slot);
    const got = source.readInto ? await source.readInto(offset, buffer) : await copyRead(source, offset, buffer);
    if (got < cluster) throw new ImageError('malformed', `the file ends inside the L2 table at ${hex(offset)}`);
    return slot;
  };

  // Blocking reads never give the event loop a turn on their own: hand it one every few
  // milliseconds so progress can be drawn and a cancel request can arrive.
  let lastYield = performance.now();
  const breathe = async (): Promise<void> => {
    if (performance.now() - lastYield < YIELD_EVERY_MS) return;
    await new Promise<void>((resolve) => setImmediate(resolve));
    lastYield = performance.now();
  };

  const readSync = source.readIntoSync?.bind(source);
  let lastReport = 0;
  const report = (l1Done: number): void => {
    onProgress?.({ l1Done, l1Total, l2TablesRead: summary.l2TablesAllocated });
  };

  for (let chunkStart = 0; chunkStart < l1Total; chunkStart += L1_CHUNK_ENTRIES) {
    throwIfAborted(signal);
    const count = Math.min(L1_CHUNK_ENTRIES, l1Total - chunkStart);
    const l1 = await source.read(header.l1Offset + BigInt(chunkStart * 8), count * 8);
    if (l1.length < count * 8) throw new ImageError('malformed', 'the file ends inside the L1 table');
    const tables: Array<{ l1Index: number; offset: number }> = [];
    for (const { index, high, low } of nonZeroEntries(l1, count)) {
      const l1Index = chunkStart + index;
      if ((low & 0x1ff) !== 0 || (high & 0x7f000000) !== 0) warn('L1 entries with reserved bits set', `entry ${l1Index}`);
      const offset = (high & 0x00ffffff) * TWO_32 + ((low & 0xfffffe00) >>> 0);
      if (offset === 0) continue; // only the "copied" flag: no table
      checkTableOffset(offset, l1Index);
      tables.push({ l1Index, offset });
    }
    const afterTable = (l1Index: number): void => {
      summary.l2TablesAllocated++;
      if (onProgress && summary.l2TablesAllocated - lastReport >= 64) {
        lastReport = summary.l2TablesAllocated;
        report(l1Index);
      }
    };
    if (readSync) {
      // Blocking reads: one buffer, no promise per table; a turn for the event loop now and then.
      for (let t = 0; t < tables.length; t++) {
        const { offset, l1Index } = atIndex(tables, t);
        if (readSync(offset, atIndex(scanner.buffers, 0)) < cluster) throw new ImageError('malformed', `the file ends inside the L2 table at ${hex(offset)}`);
        counter.countTable(0, l1Index);
        afterTable(l1Index);
        if ((t & 15) === 15) {
          await breathe();
          throwIfAborted(signal);
        }
      }
    } else {
      const pending: Array<Promise<number>> = [];
      // A read that fails while an earlier one is awaited is reported when its turn comes.
      const start = (offset: number, slot: number): void => {
        const read = readTable(offset, slot);
        read.catch(() => undefined);
        pending.push(read);
      };
      try {
        for (let t = 0; t < tables.length && t < READS_IN_FLIGHT; t++) start(atIndex(tables, t).offset, t);
        for (let t = 0; t < tables.length; t++) {
          const slot = await atIndex(pending, t);
          await breathe();
          throwIfAborted(signal);
          counter.countTable(slot, atIndex(tables, t).l1Index);
          afterTable(atIndex(tables, t).l1Index);
          const next = t + READS_IN_FLIGHT;
          if (next < tables.length) start(atIndex(tables, next).offset, slot);
        }
      } finally {
        // No read may still be filling a buffer once the scanner goes back to the pool.
        await Promise.allSettled(pending);
      }
    }
    report(chunkStart + count);
  }
  if (l1Total === 0) report(0);

  Object.assign(summary, counter.tally);
  for (const [what, { count, first }] of counter.oddities) summary.warnings.push(`${count} ${what}, the first at ${first}`);
  const { dataPerRegion, zeroPerRegion } = counter;
  // Region totals are whole bytes well inside a double's exact range for any file that exists.
  summary.allocatedBytes = BigInt(dataPerRegion.reduce((sum, bytes) => sum + bytes, 0));
  summary.zeroBytes = BigInt(zeroPerRegion.reduce((sum, bytes) => sum + bytes, 0));
  const regionLength = (r: number): number =>
    r === regions - 1 ? (totalClusters - r * clustersPerRegion - 1) * cluster + lastClusterBytes : clustersPerRegion * cluster;
  for (let r = 0; r < regions; r++) {
    const length = regionLength(r);
    summary.allocation.data.push(Math.min(1, (dataPerRegion[r] ?? 0) / length));
    summary.allocation.zero.push(Math.min(1, (zeroPerRegion[r] ?? 0) / length));
  }
  return summary;
}

async function copyRead(source: ByteSource, offset: number, buffer: Uint8Array): Promise<number> {
  const bytes = await source.read(offset, buffer.length);
  buffer.set(bytes);
  return bytes.length;
}

/**
 * The non-zero 8-byte big-endian entries of a table (an L1 chunk), as two 32-bit words each. A small
 * function of its own so the JIT optimises the loop early: an L1 table can hold millions of entries.
 */
function nonZeroEntries(bytes: Uint8Array, count: number): Array<{ index: number; high: number; low: number }> {
  const found: Array<{ index: number; high: number; low: number }> = [];
  const view = new DataView(bytes.buffer, bytes.byteOffset, count * 8);
  for (let i = 0; i < count; i++) {
    const high = view.getUint32(i * 8);
    const low = view.getUint32(i * 8 + 4);
    if ((high | low) !== 0) found.push({ index: i, high, low });
  }
  return found;
}

