// The metadata walk [SPEC "Cluster mapping", "Extended L2 Entries"]: the active L1 table is read in
// bounded chunks and each allocated L2 table is read and counted one at a time (a few reads in
// flight), so memory depends on the cluster size only, never on the virtual size or the L1 size.
import { ImageError, throwIfAborted } from './errors';
import type { Qcow2Header } from './header';
import type { ByteSource } from './source';
import { createBlockScanner } from './zero-scan';

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

export interface MetadataSummary {
  l2TablesAllocated: number;
  /** Guest clusters with data in this layer: standard + compressed (+ standard with any subcluster allocated). */
  dataClustersAllocated: number;
  standardClusters: number;
  compressedClusters: number;
  /** Clusters whose zero flag is set (version 3, standard L2 entries). */
  zeroClusters: number;
  /** Extended L2 only: subclusters allocated, and subclusters marked as reading zeros. */
  subclustersAllocated: number;
  subclustersZero: number;
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
const DEFAULT_BUCKETS = 64;
const MAX_BUCKETS = 4096;
const YIELD_EVERY_MS = 8;

const hex = (n: number): string => `0x${n.toString(16)}`;

export async function walkMetadata(source: ByteSource, header: Qcow2Header, options: WalkOptions = {}): Promise<MetadataSummary> {
  const { signal, onProgress } = options;
  throwIfAborted(signal);
  const cluster = Number(header.clusterSize);
  const fileSize = Number(header.fileSize);
  const extended = header.extendedL2;
  const entryBytes = extended ? 16 : 8;
  const entriesPerTable = cluster / entryBytes;
  const virtualSize = header.virtualSize;
  const totalClustersBig = (virtualSize + header.clusterSize - 1n) / header.clusterSize;
  const totalClusters = Number(totalClustersBig);
  const l1Total = header.l1EntriesNeeded;
  const zeroFlagAllowed = header.version === 3 && !extended;
  const subclusterBytes = cluster / 32;
  const l1Start = Number(header.l1Offset);
  const l1End = l1Start + header.l1Entries * 8;

  // Regions: whole clusters each, at most `buckets` of them.
  const wanted = Math.min(MAX_BUCKETS, Math.max(1, Math.floor(options.buckets ?? DEFAULT_BUCKETS)));
  const clustersPerRegion = Math.max(1, Math.ceil(totalClusters / wanted));
  const regions = totalClusters === 0 ? 0 : Math.ceil(totalClusters / clustersPerRegion);
  const dataPerRegion = new Float64Array(regions);
  const zeroPerRegion = new Float64Array(regions);
  const lastCluster = totalClusters - 1;
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
  // Inconsistencies are counted per kind, so a damaged table gives a few lines, not thousands.
  const oddities = new Map<string, { count: number; first: string }>();
  const warn = (what: string, where: string): void => {
    const seen = oddities.get(what);
    if (seen) seen.count++;
    else oddities.set(what, { count: 1, first: where });
  };

  // Where each L2 table sits, so a table referenced twice is an error rather than a loop of rereads:
  // this bounds the work by the file's size whatever the L1 table says.
  const tableOwners = new Map<number, number>();
  const compressedShift = 62 - (header.clusterBits - 8) - 32; // bits of the offset in the high word
  const compressedOffsetHighMask = 2 ** compressedShift - 1;

  const guestOffsetText = (clusterIndex: number): string => hex(clusterIndex * cluster);

  // Tables are read into the scanner's buffers; it finds the non-zero 16-byte blocks, and only the
  // entries in those are decoded.
  const scanner = createBlockScanner(cluster, READS_IN_FLIGHT);
  const views = scanner.buffers.map((b) => new DataView(b.buffer, b.byteOffset, cluster));
  const wordViews = scanner.buffers.map((b) => new Int32Array(b.buffer, b.byteOffset, cluster / 4));
  const countTable = (slot: number, l1Index: number): void => {
    const view = views[slot]!;
    const words = wordViews[slot]!;
    const firstCluster = l1Index * entriesPerTable;
    const entries = Math.min(entriesPerTable, totalClusters - firstCluster);
    const { offsets, count } = scanner.scan(slot);
    for (let k = 0; k < count; k++) {
      const offset = offsets[k]!;
      if (extended) {
        const i = offset >> 4;
        if (i < entries) countEntry(view, words, i, firstCluster);
        continue;
      }
      // A 16-byte block holds two standard entries; usually only one of them is set.
      const i = offset >> 3;
      const w = offset >> 2;
      if ((words[w]! | words[w + 1]!) !== 0 && i < entries) countEntry(view, words, i, firstCluster);
      if ((words[w + 2]! | words[w + 3]!) !== 0 && i + 1 < entries) countEntry(view, words, i + 1, firstCluster);
    }
  };

  // The hot path keeps to 32-bit integers (host offsets as high and low words, unsigned order by
  // flipping the sign bit), so the JIT never has to fall back to doubles part way through a walk.
  const fileHigh = Math.floor(fileSize / TWO_32);
  const fileLowFlipped = (fileSize % TWO_32 ^ 0x80000000) | 0;
  const alignMask = (cluster - 1) & ~0x1ff;
  const beyondFile = (hostHigh: number, hostLow: number): boolean =>
    hostHigh > fileHigh || (hostHigh === fileHigh && ((hostLow ^ 0x80000000) | 0) >= fileLowFlipped);
  const offsetText = (hostHigh: number, hostLow: number): string => hex(hostHigh * TWO_32 + (hostLow >>> 0));

  const countEntry = (view: DataView, words: Int32Array, i: number, firstCluster: number): void => {
    const w = i * (entryBytes / 4);
    if (words[w] === 0 && words[w + 1] === 0 && (!extended || (words[w + 2] === 0 && words[w + 3] === 0))) return;
    const at = i * entryBytes;
    const high = view.getInt32(at);
    const low = view.getInt32(at + 4);
    const clusterIndex = firstCluster + i;
    const region = Math.floor(clusterIndex / clustersPerRegion);
    const guestBytes = clusterIndex === lastCluster ? lastClusterBytes : cluster;

    if ((high & 0x40000000) !== 0) {
      // [SPEC] compressed cluster descriptor, x = 62 - (cluster_bits - 8)
      if (header.externalData) throw new ImageError('malformed', `compressed cluster at guest offset ${guestOffsetText(clusterIndex)} in an image with an external data file`);
      const hostHigh = high & compressedOffsetHighMask;
      if ((hostHigh === 0 && low === 0) || beyondFile(hostHigh, low)) {
        throw new ImageError('malformed', `compressed data for guest offset ${guestOffsetText(clusterIndex)} is at host offset ${offsetText(hostHigh, low)}, outside the file (${fileSize} bytes)`);
      }
      if (extended && (view.getInt32(at + 8) !== 0 || view.getInt32(at + 12) !== 0)) {
        warn('compressed clusters with a non-zero subcluster bitmap (reserved)', `guest offset ${guestOffsetText(clusterIndex)}`);
      }
      summary.compressedClusters++;
      summary.dataClustersAllocated++;
      dataPerRegion[region] = (dataPerRegion[region] ?? 0) + guestBytes;
      return;
    }

    const hostHigh = high & 0x00ffffff;
    const hostLow = low & 0xfffffe00;
    const hasHost = hostHigh !== 0 || hostLow !== 0 || (header.externalData && high < 0); // bit 63: copied
    if ((low & 0x1fe) !== 0 || (high & 0x3f000000) !== 0 || (!zeroFlagAllowed && (low & 1) !== 0)) {
      warn('L2 entries with reserved bits set', `guest offset ${guestOffsetText(clusterIndex)}`);
    }
    if (hasHost && !header.externalData) {
      if ((low & alignMask) !== 0) {
        throw new ImageError('malformed', `the data cluster for guest offset ${guestOffsetText(clusterIndex)} is at host offset ${offsetText(hostHigh, hostLow)}, not aligned to the ${cluster}-byte cluster size`);
      }
      if (beyondFile(hostHigh, hostLow)) {
        throw new ImageError('malformed', `the data cluster for guest offset ${guestOffsetText(clusterIndex)} is at host offset ${offsetText(hostHigh, hostLow)}, past the end of the file (${fileSize} bytes)`);
      }
    }

    if (extended) {
      const zeroMask = view.getInt32(at + 8); // bits 32..63: subcluster reads as zeros
      const allocMask = view.getInt32(at + 12); // bits 0..31: subcluster allocated
      if ((allocMask & zeroMask) !== 0) warn('L2 entries marking subclusters both allocated and zero', `guest offset ${guestOffsetText(clusterIndex)}`);
      if (allocMask !== 0 && !hasHost) {
        throw new ImageError('malformed', `the L2 entry for guest offset ${guestOffsetText(clusterIndex)} marks subclusters allocated but has no host cluster`);
      }
      const allocated = popcount(allocMask);
      const zeros = popcount(zeroMask & ~allocMask);
      summary.subclustersAllocated += allocated;
      summary.subclustersZero += zeros;
      if (allocated > 0) {
        summary.standardClusters++;
        summary.dataClustersAllocated++;
        dataPerRegion[region] = (dataPerRegion[region] ?? 0) + Math.min(allocated * subclusterBytes, guestBytes);
      }
      if (zeros > 0) zeroPerRegion[region] = (zeroPerRegion[region] ?? 0) + Math.min(zeros * subclusterBytes, guestBytes);
      return;
    }

    if (zeroFlagAllowed && (low & 1) !== 0) {
      summary.zeroClusters++;
      zeroPerRegion[region] = (zeroPerRegion[region] ?? 0) + guestBytes;
    } else if (hasHost) {
      summary.standardClusters++;
      summary.dataClustersAllocated++;
      dataPerRegion[region] = (dataPerRegion[region] ?? 0) + guestBytes;
    }
  };

  const checkTableOffset = (offset: number, l1Index: number): void => {
    const where = `the L2 table of L1 entry ${l1Index} (guest offset ${hex(l1Index * entriesPerTable * cluster)})`;
    if (offset % cluster !== 0) throw new ImageError('malformed', `${where} is at ${hex(offset)}, not aligned to the ${cluster}-byte cluster size`);
    if (offset + cluster > fileSize) throw new ImageError('malformed', `${where} is at ${hex(offset)}, past the end of the file (${fileSize} bytes)`);
    if (offset < l1End && offset + cluster > l1Start) throw new ImageError('malformed', `${where} overlaps the L1 table`);
    const owner = tableOwners.get(offset);
    if (owner !== undefined) throw new ImageError('malformed', `${where} is at ${hex(offset)}, the same place as the L2 table of L1 entry ${owner}`);
    tableOwners.set(offset, l1Index);
  };

  const readTable = async (offset: number, slot: number): Promise<number> => {
    const buffer = scanner.buffers[slot]!;
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
    const l1View = new DataView(l1.buffer, l1.byteOffset, l1.byteLength);
    const tables: Array<{ l1Index: number; offset: number }> = [];
    for (let i = 0; i < count; i++) {
      const high = l1View.getUint32(i * 8);
      const low = l1View.getUint32(i * 8 + 4);
      if (high === 0 && low === 0) continue;
      const l1Index = chunkStart + i;
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
        const { offset, l1Index } = tables[t]!;
        if (readSync(offset, scanner.buffers[0]!) < cluster) throw new ImageError('malformed', `the file ends inside the L2 table at ${hex(offset)}`);
        countTable(0, l1Index);
        afterTable(l1Index);
        if ((t & 15) === 15) {
          await breathe();
          throwIfAborted(signal);
        }
      }
    } else {
      const pending: Array<Promise<number>> = [];
      for (let t = 0; t < tables.length && t < READS_IN_FLIGHT; t++) pending.push(readTable(tables[t]!.offset, t));
      for (let t = 0; t < tables.length; t++) {
        const slot = await pending[t]!;
        await breathe();
        if (signal?.aborted) {
          await Promise.allSettled(pending.slice(t + 1));
          throw new ImageError('cancelled', 'cancelled');
        }
        countTable(slot, tables[t]!.l1Index);
        afterTable(tables[t]!.l1Index);
        const next = t + READS_IN_FLIGHT;
        if (next < tables.length) pending.push(readTable(tables[next]!.offset, slot));
      }
    }
    report(chunkStart + count);
  }
  if (l1Total === 0) report(0);

  for (const [what, { count, first }] of oddities) summary.warnings.push(`${count} ${what}, the first at ${first}`);
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

function popcount(mask: number): number {
  let v = mask >>> 0;
  v = v - ((v >>> 1) & 0x55555555);
  v = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
  return (((v + (v >>> 4)) & 0x0f0f0f0f) * 0x01010101) >>> 24;
}
