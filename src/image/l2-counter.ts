// Counting the entries of L2 tables [SPEC "Cluster mapping", "Extended L2 Entries"]. This is the
// walk's hot path, so it is one class created once per walk: plain fields instead of captured
// variables, 32-bit integer arithmetic only (host offsets as high and low words, unsigned order by
// flipping the sign bit, cluster positions relative to the table), so optimised code stays valid
// for every image and every walk.
import { ImageError } from './errors';
import type { Qcow2Header } from './header';
import type { BlockScanner } from './zero-scan';
import { atIndex } from '../core/indexed';

const TWO_32 = 4294967296;
const hex = (n: number): string => `0x${n.toString(16)}`;

export interface Tally {
  dataClustersAllocated: number;
  standardClusters: number;
  compressedClusters: number;
  zeroClusters: number;
  subclustersAllocated: number;
  subclustersZero: number;
}

export class L2Counter {
  readonly tally: Tally = { dataClustersAllocated: 0, standardClusters: 0, compressedClusters: 0, zeroClusters: 0, subclustersAllocated: 0, subclustersZero: 0 };
  /** Guest bytes stored in this layer / reading as zeros, per region of the allocation map. */
  readonly dataPerRegion: Float64Array;
  readonly zeroPerRegion: Float64Array;
  /** Inconsistencies that do not stop reading, counted per kind with the first place seen. */
  readonly oddities = new Map<string, { count: number; first: string }>();

  private readonly cluster: number;
  private readonly entryBytes: number;
  private readonly entriesPerTable: number;
  private readonly extended: boolean;
  private readonly externalData: boolean;
  private readonly zeroFlagAllowed: boolean;
  private readonly subclusterBytes: number;
  private readonly fileHigh: number;
  private readonly fileLowFlipped: number;
  private readonly fileSize: number;
  private readonly alignMask: number;
  private readonly compressedHighMask: number;
  private readonly views: DataView[];
  private readonly words: Int32Array[];

  // Per table: where it starts in the guest disk and how its entries fall into regions.
  private firstCluster = 0;
  private region = 0;
  private regionRoom = 0;
  private lastEntryBytes = 0;
  private lastEntry = -1;

  constructor(
    header: Qcow2Header,
    private readonly scanner: BlockScanner,
    private readonly totalClusters: number,
    private readonly clustersPerRegion: number,
    regions: number,
    private readonly lastClusterBytes: number,
  ) {
    this.cluster = Number(header.clusterSize);
    this.extended = header.extendedL2;
    this.entryBytes = this.extended ? 16 : 8;
    this.entriesPerTable = this.cluster / this.entryBytes;
    this.externalData = header.externalData;
    this.zeroFlagAllowed = header.version === 3 && !this.extended;
    this.subclusterBytes = this.cluster / 32;
    this.fileSize = Number(header.fileSize);
    this.fileHigh = Math.floor(this.fileSize / TWO_32);
    this.fileLowFlipped = ((this.fileSize % TWO_32) ^ 0x80000000) | 0;
    this.alignMask = (this.cluster - 1) & ~0x1ff;
    this.compressedHighMask = 2 ** (62 - (header.clusterBits - 8) - 32) - 1; // [SPEC] x = 62 - (cluster_bits - 8)
    this.dataPerRegion = new Float64Array(regions);
    this.zeroPerRegion = new Float64Array(regions);
    this.views = scanner.buffers.map((b) => new DataView(b.buffer, b.byteOffset, b.byteLength));
    this.words = scanner.buffers.map((b) => new Int32Array(b.buffer, b.byteOffset, b.byteLength / 4));
  }

  /** Counts the table in scanner buffer `slot`, the L2 table of L1 entry `l1Index`. */
  countTable(slot: number, l1Index: number): void {
    const firstCluster = l1Index * this.entriesPerTable;
    this.firstCluster = firstCluster;
    this.region = Math.floor(firstCluster / this.clustersPerRegion);
    // Entries from the table's start up to the next region boundary belong to this.region.
    this.regionRoom = (this.region + 1) * this.clustersPerRegion - firstCluster;
    const entries = Math.min(this.entriesPerTable, this.totalClusters - firstCluster);
    this.lastEntry = firstCluster + entries === this.totalClusters ? entries - 1 : -1;
    this.lastEntryBytes = this.lastClusterBytes;
    const view = atIndex(this.views, slot);
    const words = atIndex(this.words, slot);
    const { offsets, count } = this.scanner.scan(slot);
    for (let k = 0; k < count; k++) {
      const offset = atIndex(offsets, k);
      if (this.extended) {
        const i = offset >> 4;
        if (i < entries) this.countEntry(view, i);
        continue;
      }
      // A 16-byte block holds two standard entries; usually only one of them is set.
      const i = offset >> 3;
      const w = offset >> 2;
      if ((atIndex(words, w) | atIndex(words, w + 1)) !== 0 && i < entries) this.countEntry(view, i);
      if ((atIndex(words, w + 2) | atIndex(words, w + 3)) !== 0 && i + 1 < entries) this.countEntry(view, i + 1);
    }
  }

  private regionOf(i: number): number {
    if (i < this.regionRoom) return this.region;
    return this.region + 1 + Math.floor((i - this.regionRoom) / this.clustersPerRegion);
  }

  private where(i: number): string {
    return `guest offset ${hex((this.firstCluster + i) * this.cluster)}`;
  }

  private warn(what: string, i: number): void {
    const seen = this.oddities.get(what);
    if (seen) seen.count++;
    else this.oddities.set(what, { count: 1, first: this.where(i) });
  }

  private beyondFile(hostHigh: number, hostLow: number): boolean {
    return hostHigh > this.fileHigh || (hostHigh === this.fileHigh && ((hostLow ^ 0x80000000) | 0) >= this.fileLowFlipped);
  }

  private countEntry(view: DataView, i: number): void {
    const at = i * this.entryBytes;
    const high = view.getInt32(at);
    const low = view.getInt32(at + 4);
    if (high === 0 && low === 0 && (!this.extended || (view.getInt32(at + 8) === 0 && view.getInt32(at + 12) === 0))) return;
    const region = this.regionOf(i);
    const guestBytes = i === this.lastEntry ? this.lastEntryBytes : this.cluster;
    const tally = this.tally;

    if ((high & 0x40000000) !== 0) {
      if (this.externalData) throw new ImageError('malformed', `compressed cluster at ${this.where(i)} in an image with an external data file`);
      const hostHigh = high & this.compressedHighMask;
      if ((hostHigh === 0 && low === 0) || this.beyondFile(hostHigh, low)) {
        throw new ImageError('malformed', `compressed data for ${this.where(i)} is at host offset ${offsetText(hostHigh, low)}, outside the file (${this.fileSize} bytes)`);
      }
      if (this.extended && (view.getInt32(at + 8) !== 0 || view.getInt32(at + 12) !== 0)) this.warn('compressed clusters with a non-zero subcluster bitmap (reserved)', i);
      tally.compressedClusters++;
      tally.dataClustersAllocated++;
      this.dataPerRegion[region] = atIndex(this.dataPerRegion, region) + guestBytes;
      return;
    }

    const hostHigh = high & 0x00ffffff;
    const hostLow = low & 0xfffffe00;
    const hasHost = hostHigh !== 0 || hostLow !== 0 || (this.externalData && high < 0); // bit 63: copied
    if ((low & 0x1fe) !== 0 || (high & 0x3f000000) !== 0 || (!this.zeroFlagAllowed && (low & 1) !== 0)) this.warn('L2 entries with reserved bits set', i);
    if (hasHost && !this.externalData) {
      if ((low & this.alignMask) !== 0) {
        throw new ImageError('malformed', `the data cluster for ${this.where(i)} is at host offset ${offsetText(hostHigh, hostLow)}, not aligned to the ${this.cluster}-byte cluster size`);
      }
      if (this.beyondFile(hostHigh, hostLow)) {
        throw new ImageError('malformed', `the data cluster for ${this.where(i)} is at host offset ${offsetText(hostHigh, hostLow)}, past the end of the file (${this.fileSize} bytes)`);
      }
    }

    if (this.extended) {
      const zeroMask = view.getInt32(at + 8); // bits 32..63: subcluster reads as zeros
      const allocMask = view.getInt32(at + 12); // bits 0..31: subcluster allocated
      if ((allocMask & zeroMask) !== 0) this.warn('L2 entries marking subclusters both allocated and zero', i);
      if (allocMask !== 0 && !hasHost) {
        throw new ImageError('malformed', `the L2 entry for ${this.where(i)} marks subclusters allocated but has no host cluster`);
      }
      const allocated = popcount(allocMask);
      const zeros = popcount(zeroMask & ~allocMask);
      tally.subclustersAllocated += allocated;
      tally.subclustersZero += zeros;
      if (allocated > 0) {
        tally.standardClusters++;
        tally.dataClustersAllocated++;
        this.dataPerRegion[region] = atIndex(this.dataPerRegion, region) + Math.min(allocated * this.subclusterBytes, guestBytes);
      }
      if (zeros > 0) this.zeroPerRegion[region] = atIndex(this.zeroPerRegion, region) + Math.min(zeros * this.subclusterBytes, guestBytes);
      return;
    }

    if (this.zeroFlagAllowed && (low & 1) !== 0) {
      tally.zeroClusters++;
      this.zeroPerRegion[region] = atIndex(this.zeroPerRegion, region) + guestBytes;
    } else if (hasHost) {
      tally.standardClusters++;
      tally.dataClustersAllocated++;
      this.dataPerRegion[region] = atIndex(this.dataPerRegion, region) + guestBytes;
    }
  }
}

const offsetText = (hostHigh: number, hostLow: number): string => hex(hostHigh * TWO_32 + (hostLow >>> 0));

function popcount(mask: number): number {
  let v = mask >>> 0;
  v = v - ((v >>> 1) & 0x55555555);
  v = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
  return (((v + (v >>> 4)) & 0x0f0f0f0f) * 0x01010101) >>> 24;
}
