// A qcow2 image writer for tests, built from the format specification alone ([SPEC]: the qcow2 image
// format document, version 3). It knows exactly what it wrote, so its images are ground truth for the
// reader; an independent reader (Debian's python3-libqcow) checks that the images themselves are right.
import { closeSync, ftruncateSync, openSync, writeSync } from 'node:fs';
import { deflateRawSync } from 'node:zlib';

export type ClusterKind = 'data' | 'zero' | 'compressed';

export interface ClusterSpec {
  /** Index of the guest cluster (guest offset / cluster size). */
  guest: number;
  kind: ClusterKind;
  /** Extended L2 only, kind 'data': which of the 32 subclusters are allocated / read as zeros. */
  allocatedMask?: number;
  zeroMask?: number;
  /** Zero clusters: keep a preallocated host cluster behind the zero flag. */
  preallocated?: boolean;
}

export interface ImageSpec {
  version: 2 | 3;
  clusterBits: number;
  virtualSize: bigint;
  /** refcount_bits = 1 << refcountOrder; version 2 is always 4 (16 bits). */
  refcountOrder?: number;
  extendedL2?: boolean;
  backing?: { name: string; format?: string };
  clusters: ClusterSpec[];
  dirty?: boolean;
  /** Extra incompatible bits to set (tests of unknown features). */
  extraIncompatible?: bigint;
  featureNames?: Array<{ kind: 0 | 1 | 2; bit: number; name: string }>;
  /** Header extensions of unknown types, to be skipped. */
  unknownExtensions?: Array<{ type: number; data: Uint8Array }>;
  /** Seed for the data pattern, so layers of a chain hold different bytes. */
  seed?: number;
  /** Write the data clusters' contents (default true); off leaves them as holes (benchmarks). */
  writeData?: boolean;
  /** Extra L1 entries beyond those the virtual size needs. */
  extraL1Entries?: number;
}

export interface WrittenImage {
  path: string;
  fileSize: number;
  clusterSize: number;
  l1Offset: number;
  l1Entries: number;
  refcountTableOffset: number;
  /** L1 index -> host offset of its L2 table. */
  l2Tables: Map<number, number>;
  /** guest cluster -> host offset of its data (standard clusters) or compressed bytes. */
  dataOffsets: Map<number, number>;
  /** Ground truth for the reader. */
  truth: {
    l2TablesAllocated: number;
    dataClustersAllocated: number;
    compressedClusters: number;
    zeroClusters: number;
    subclustersAllocated: number;
    subclustersZero: number;
  };
  /** The bytes a guest reads at [offset, offset + length) in this layer alone (undefined: falls through). */
  layerBytes(offset: number): number | undefined;
}

export const HEADER_V2_BYTES = 72;
export const HEADER_V3_BYTES = 112; // 104 + compression_type + padding to a multiple of 8 [SPEC]
const EXT_BACKING_FORMAT = 0xe2792aca;
const EXT_FEATURE_NAMES = 0x6803f857;

/** The byte a data cluster holds at `within`: varied, mostly non-zero, different per layer. */
export function patternByte(guestCluster: number, within: number, seed: number): number {
  return ((guestCluster * 131 + seed * 29 + (within >> 9) * 17 + (within & 0xff) + 1) & 0xff) || 0x5a;
}

export function clusterPattern(guestCluster: number, clusterSize: number, seed: number): Uint8Array {
  const bytes = new Uint8Array(clusterSize);
  for (let i = 0; i < clusterSize; i++) bytes[i] = patternByte(guestCluster, i, seed);
  return bytes;
}

const ceilDiv = (a: number, b: number): number => Math.ceil(a / b);

export function writeImage(path: string, spec: ImageSpec): WrittenImage {
  const cluster = 2 ** spec.clusterBits;
  const extended = spec.extendedL2 ?? false;
  const entryBytes = extended ? 16 : 8;
  const entriesPerTable = cluster / entryBytes;
  const refcountOrder = spec.version === 2 ? 4 : spec.refcountOrder ?? 4;
  const refcountBits = 2 ** refcountOrder;
  const seed = spec.seed ?? 1;
  const guestClusters = Number((spec.virtualSize + BigInt(cluster) - 1n) / BigInt(cluster));
  const l1Needed = ceilDiv(guestClusters, entriesPerTable);
  const l1Entries = l1Needed + (spec.extraL1Entries ?? 0);
  const l1Clusters = Math.max(1, ceilDiv(l1Entries * 8, cluster));

  const clusters = [...spec.clusters].sort((a, b) => a.guest - b.guest);
  for (const c of clusters) if (c.guest >= guestClusters) throw new Error(`guest cluster ${c.guest} is past the virtual size`);
  const tableIndexes = [...new Set(clusters.map((c) => Math.floor(c.guest / entriesPerTable)))];
  const needsHost = (c: ClusterSpec): boolean => c.kind === 'data' ? !extended || (c.allocatedMask ?? 0) !== 0 : c.kind === 'compressed' || c.preallocated === true;

  // Compressed payloads first, so their host clusters can be counted.
  const compressed = new Map<number, Uint8Array>();
  for (const c of clusters) if (c.kind === 'compressed') compressed.set(c.guest, deflateRawSync(clusterPattern(c.guest, cluster, seed)));
  let dataHostClusters = 0;
  for (const c of clusters) {
    if (c.kind === 'compressed') dataHostClusters += ceilDiv(compressed.get(c.guest)!.length, cluster);
    else if (needsHost(c)) dataHostClusters++;
  }

  // Refcount structures must count themselves too: grow until the layout is stable.
  const perBlock = (cluster * 8) / refcountBits;
  let blocks = 1;
  let tableClusters = 1;
  for (;;) {
    const total = 1 + l1Clusters + tableClusters + blocks + tableIndexes.length + dataHostClusters;
    const needBlocks = ceilDiv(total, perBlock);
    const needTable = ceilDiv(needBlocks * 8, cluster);
    if (needBlocks === blocks && needTable === tableClusters) break;
    blocks = needBlocks;
    tableClusters = needTable;
  }

  let next = 1;
  const take = (n: number): number => {
    const at = next * cluster;
    next += n;
    return at;
  };
  const l1Offset = take(l1Clusters);
  const refcountTableOffset = take(tableClusters);
  const blockOffsets = Array.from({ length: blocks }, () => take(1));
  const l2Tables = new Map<number, number>();
  for (const t of tableIndexes) l2Tables.set(t, take(1));
  const dataOffsets = new Map<number, number>();
  for (const c of clusters) {
    if (c.kind === 'compressed') dataOffsets.set(c.guest, take(ceilDiv(compressed.get(c.guest)!.length, cluster)));
    else if (needsHost(c)) dataOffsets.set(c.guest, take(1));
  }
  const hostClusters = next;
  const fileSize = hostClusters * cluster;

  const writes: Array<{ at: number; bytes: Uint8Array }> = [];
  writes.push({ at: 0, bytes: headerCluster(spec, cluster, l1Entries, l1Offset, refcountTableOffset, tableClusters, refcountOrder) });

  const l1 = new DataView(new ArrayBuffer(l1Clusters * cluster));
  for (const [index, offset] of l2Tables) l1.setBigUint64(index * 8, BigInt(offset) | (1n << 63n)); // copied: refcount 1
  writes.push({ at: l1Offset, bytes: new Uint8Array(l1.buffer) });

  const rt = new DataView(new ArrayBuffer(tableClusters * cluster));
  blockOffsets.forEach((offset, i) => rt.setBigUint64(i * 8, BigInt(offset)));
  writes.push({ at: refcountTableOffset, bytes: new Uint8Array(rt.buffer) });
  const refBlocks = blockOffsets.map(() => new Uint8Array(cluster));
  for (let host = 0; host < hostClusters; host++) setRefcount(refBlocks[Math.floor(host / perBlock)]!, host % perBlock, refcountBits, 1n);
  blockOffsets.forEach((offset, i) => writes.push({ at: offset, bytes: refBlocks[i]! }));

  const compressedShift = BigInt(62 - (spec.clusterBits - 8));
  const truth = { l2TablesAllocated: l2Tables.size, dataClustersAllocated: 0, compressedClusters: 0, zeroClusters: 0, subclustersAllocated: 0, subclustersZero: 0 };
  const tables = new Map<number, DataView>();
  for (const t of tableIndexes) tables.set(t, new DataView(new ArrayBuffer(cluster)));
  const sub = cluster / 32;
  const layer = new Map<number, ClusterSpec>();
  for (const c of clusters) {
    layer.set(c.guest, c);
    const table = tables.get(Math.floor(c.guest / entriesPerTable))!;
    const at = (c.guest % entriesPerTable) * entryBytes;
    const host = dataOffsets.get(c.guest);
    if (c.kind === 'compressed') {
      const payload = compressed.get(c.guest)!;
      const sectors = BigInt(ceilDiv(payload.length, 512) - 1);
      table.setBigUint64(at, (1n << 62n) | (sectors << compressedShift) | BigInt(host!));
      truth.compressedClusters++;
      truth.dataClustersAllocated++;
      writes.push({ at: host!, bytes: payload });
    } else if (c.kind === 'zero') {
      if (extended) throw new Error('use zeroMask for zero subclusters with extended L2');
      if (spec.version === 2) throw new Error('version 2 has no zero flag [SPEC]');
      table.setBigUint64(at, (host !== undefined ? BigInt(host) | (1n << 63n) : 0n) | 1n);
      truth.zeroClusters++;
    } else {
      const alloc = extended ? (c.allocatedMask ?? 0) >>> 0 : 0;
      const zero = extended ? (c.zeroMask ?? 0) >>> 0 : 0;
      table.setBigUint64(at, host !== undefined ? BigInt(host) | (1n << 63n) : 0n);
      if (extended) {
        table.setUint32(at + 8, zero);
        table.setUint32(at + 12, alloc);
        truth.subclustersAllocated += bitCount(alloc);
        truth.subclustersZero += bitCount(zero);
        if (alloc !== 0) truth.dataClustersAllocated++;
      } else truth.dataClustersAllocated++;
      if (host !== undefined && spec.writeData !== false) {
        const bytes = clusterPattern(c.guest, cluster, seed);
        if (extended) for (let s = 0; s < 32; s++) if (((alloc >>> s) & 1) === 0) bytes.fill(0, s * sub, (s + 1) * sub);
        writes.push({ at: host, bytes });
      }
    }
  }
  for (const [t, view] of tables) writes.push({ at: l2Tables.get(t)!, bytes: new Uint8Array(view.buffer) });

  const fd = openSync(path, 'w');
  try {
    for (const w of writes) writeSync(fd, w.bytes, 0, w.bytes.length, w.at);
    ftruncateSync(fd, fileSize); // the rest stays a hole: sparse on the host too
  } finally {
    closeSync(fd);
  }

  const layerBytes = (offset: number): number | undefined => {
    const g = Math.floor(offset / cluster);
    const within = offset % cluster;
    const c = layer.get(g);
    if (!c) return undefined;
    if (c.kind === 'zero') return 0;
    if (c.kind === 'compressed') return patternByte(g, within, seed);
    if (!extended) return patternByte(g, within, seed);
    const s = Math.floor(within / sub);
    if (((c.allocatedMask ?? 0) >>> s) & 1) return patternByte(g, within, seed);
    if (((c.zeroMask ?? 0) >>> s) & 1) return 0;
    return undefined;
  };

  return { path, fileSize, clusterSize: cluster, l1Offset, l1Entries, refcountTableOffset, l2Tables, dataOffsets, truth, layerBytes };
}

function headerCluster(spec: ImageSpec, cluster: number, l1Entries: number, l1Offset: number, refcountTableOffset: number, refcountTableClusters: number, refcountOrder: number): Uint8Array {
  const bytes = new Uint8Array(cluster);
  const view = new DataView(bytes.buffer);
  const headerLength = spec.version === 2 ? HEADER_V2_BYTES : HEADER_V3_BYTES;
  view.setUint32(0, 0x514649fb);
  view.setUint32(4, spec.version);
  view.setUint32(20, spec.clusterBits);
  view.setBigUint64(24, spec.virtualSize);
  view.setUint32(32, 0);
  view.setUint32(36, l1Entries);
  view.setBigUint64(40, BigInt(l1Offset));
  view.setBigUint64(48, BigInt(refcountTableOffset));
  view.setUint32(56, refcountTableClusters);
  view.setUint32(60, 0);
  view.setBigUint64(64, 0n);
  if (spec.version === 3) {
    let incompatible = spec.extraIncompatible ?? 0n;
    if (spec.dirty) incompatible |= 1n;
    if (spec.extendedL2) incompatible |= 1n << 4n;
    view.setBigUint64(72, incompatible);
    view.setBigUint64(80, 0n);
    view.setBigUint64(88, 0n);
    view.setUint32(96, refcountOrder);
    view.setUint32(100, headerLength);
    // byte 104: compression_type 0 (zlib), then zero padding
  }
  let at = headerLength;
  const extension = (type: number, data: Uint8Array): void => {
    view.setUint32(at, type);
    view.setUint32(at + 4, data.length);
    bytes.set(data, at + 8);
    at += 8 + Math.ceil(data.length / 8) * 8;
  };
  const text = new TextEncoder();
  if (spec.backing?.format) extension(EXT_BACKING_FORMAT, text.encode(spec.backing.format));
  if (spec.featureNames?.length) {
    const table = new Uint8Array(spec.featureNames.length * 48);
    spec.featureNames.forEach((f, i) => {
      table[i * 48] = f.kind;
      table[i * 48 + 1] = f.bit;
      table.set(text.encode(f.name).subarray(0, 46), i * 48 + 2);
    });
    extension(EXT_FEATURE_NAMES, table);
  }
  for (const e of spec.unknownExtensions ?? []) extension(e.type, e.data);
  at += 8; // end-of-extensions marker: type 0, length 0 (already zero)
  if (spec.backing) {
    const name = text.encode(spec.backing.name);
    view.setBigUint64(8, BigInt(at));
    view.setUint32(16, name.length);
    bytes.set(name, at);
  }
  return bytes;
}

/** [SPEC "Refcount table"]: entries of refcount_bits; below 8 bits, bit 0 is the least significant. */
function setRefcount(block: Uint8Array, index: number, bits: number, value: bigint): void {
  if (bits >= 8) {
    const width = bits / 8;
    for (let b = 0; b < width; b++) block[index * width + b] = Number((value >> BigInt((width - 1 - b) * 8)) & 0xffn);
    return;
  }
  const bit = index * bits;
  block[bit >> 3]! |= Number(value) << (bit & 7);
}

function bitCount(mask: number): number {
  let n = 0;
  for (let v = mask >>> 0; v !== 0; v >>>= 1) n += v & 1;
  return n;
}
