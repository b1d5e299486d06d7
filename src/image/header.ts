// The qcow2 header and its extensions [SPEC "Header", "Header extensions"]. Every field that points
// into the file is checked against the file's size and the cluster alignment here, before anyone
// reads through it; nothing is allocated from a size that has not been checked.
import { ceilDiv, guestBytesPerL2Table, l2EntryBytes } from '../core/sizing';
import { formatSize } from '../core/format';
import { ImageError } from './errors';
import type { ByteSource } from './source';

export const QCOW2_MAGIC = 0x514649fb; // "QFI\xfb"
const V2_HEADER_BYTES = 72;
const V3_HEADER_MIN_BYTES = 104;
/** [SPEC] cluster_bits from 9 (512 B) to the 2 MiB the format's users accept (docs/sources.md). */
export const MIN_CLUSTER_BITS = 9;
export const MAX_CLUSTER_BITS = 21;
const MIN_EXTENDED_L2_CLUSTER_BITS = 14;
const MAX_BACKING_NAME_BYTES = 1023;

/** [SPEC] incompatible feature bits. */
export const INCOMPATIBLE = { dirty: 0, corrupt: 1, externalData: 2, compressionType: 3, extendedL2: 4 } as const;
const KNOWN_INCOMPATIBLE_MASK = 0b11111n;

/** [SPEC] header extension types. */
export const EXTENSION = {
  end: 0x00000000,
  backingFormat: 0xe2792aca,
  featureNames: 0x6803f857,
  bitmaps: 0x23852875,
  encryptionHeader: 0x0537be77,
  externalDataFile: 0x44415441,
} as const;

export type FeatureKind = 'incompatible' | 'compatible' | 'autoclear';

export interface FeatureName {
  kind: FeatureKind;
  bit: number;
  name: string;
}

export interface Qcow2Header {
  version: 2 | 3;
  clusterBits: number;
  clusterSize: bigint;
  virtualSize: bigint;
  /** 0 none, 1 AES, 2 LUKS [SPEC]. */
  cryptMethod: number;
  encryption: 'none' | 'aes' | 'luks';
  l1Entries: number;
  l1Offset: bigint;
  /** L1 entries that map the virtual size (the walk reads only these). */
  l1EntriesNeeded: number;
  refcountTableOffset: bigint;
  refcountTableClusters: number;
  snapshotCount: number;
  snapshotsOffset: bigint;
  incompatibleFeatures: bigint;
  compatibleFeatures: bigint;
  autoclearFeatures: bigint;
  refcountOrder: number;
  refcountBits: number;
  headerLength: number;
  compressionType: 'zlib' | 'zstd' | `type ${number}`;
  dirty: boolean;
  corrupt: boolean;
  externalData: boolean;
  extendedL2: boolean;
  lazyRefcounts: boolean;
  /** The backing file name exactly as the header stores it, or null. */
  backingFile: string | null;
  /** From the backing-format header extension, or null when the image does not say. */
  backingFormat: string | null;
  externalDataFile: string | null;
  featureNames: FeatureName[];
  /** Types of every header extension present, in file order (unknown ones included, skipped). */
  extensionTypes: number[];
  fileSize: bigint;
}

const hex = (n: number | bigint): string => `0x${n.toString(16)}`;
const bytesOf = (n: bigint | number): string => `${n} bytes${BigInt(n) >= 1024n ? ` (${formatSize(BigInt(n))})` : ''}`;

class Fields {
  private readonly view: DataView;
  constructor(readonly bytes: Uint8Array) {
    this.view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  }
  u8 = (at: number): number => this.view.getUint8(at);
  u32 = (at: number): number => this.view.getUint32(at, false);
  u64 = (at: number): bigint => this.view.getBigUint64(at, false);
}

async function readExact(source: ByteSource, offset: bigint, length: number, what: string): Promise<Uint8Array> {
  const bytes = await source.read(offset, length);
  if (bytes.length < length) {
    throw new ImageError('malformed', `the file ends inside the ${what} (${length} bytes at offset ${offset}, ${bytes.length} present)`);
  }
  return bytes;
}

const utf8 = new TextDecoder('utf-8', { fatal: false });
const decode = (bytes: Uint8Array): string => utf8.decode(bytes);

function describeStart(bytes: Uint8Array): string {
  const shown = Array.from(bytes.subarray(0, 8), (b) => (b >= 0x20 && b < 0x7f ? String.fromCharCode(b) : '.')).join('');
  return `it starts with "${shown}"`;
}

/** Reads and checks the header of the image behind `source`. Throws ImageError. */
export async function readHeader(source: ByteSource): Promise<Qcow2Header> {
  const fileSize = BigInt(await source.size());
  if (fileSize === 0n) throw new ImageError('not-qcow2', 'is empty, not a qcow2 image');
  const firstBytes = await source.read(0, Number(fileSize < 512n ? fileSize : 512n));
  if (firstBytes.length < 4 || new Fields(firstBytes).u32(0) !== QCOW2_MAGIC) {
    throw new ImageError('not-qcow2', `is not a qcow2 image: ${describeStart(firstBytes)}, not the qcow2 magic "QFI\\xfb"`);
  }
  if (firstBytes.length < 8) throw new ImageError('malformed', `truncated header: the file is ${fileSize} bytes, a qcow2 header needs at least ${V2_HEADER_BYTES}`);
  const version = new Fields(firstBytes).u32(4);
  if (version !== 2 && version !== 3) {
    throw new ImageError('unsupported', `qcow2 version ${version} is not supported (versions 2 and 3 are)`);
  }
  const minimum = version === 2 ? V2_HEADER_BYTES : V3_HEADER_MIN_BYTES;
  if (firstBytes.length < minimum) {
    throw new ImageError('malformed', `truncated header: the file is ${fileSize} bytes, a version ${version} header needs at least ${minimum}`);
  }
  const f = new Fields(firstBytes);
  const clusterBits = f.u32(20);
  if (clusterBits < MIN_CLUSTER_BITS || clusterBits > MAX_CLUSTER_BITS) {
    throw new ImageError('malformed', `cluster_bits ${clusterBits} is out of range: it must be ${MIN_CLUSTER_BITS}..${MAX_CLUSTER_BITS} (512 B to 2 MiB clusters)`);
  }
  const clusterSize = 1n << BigInt(clusterBits);

  let headerLength = V2_HEADER_BYTES;
  let incompatibleFeatures = 0n;
  let compatibleFeatures = 0n;
  let autoclearFeatures = 0n;
  let refcountOrder = 4; // [SPEC] version 2 always uses 16-bit refcounts
  if (version === 3) {
    incompatibleFeatures = f.u64(72);
    compatibleFeatures = f.u64(80);
    autoclearFeatures = f.u64(88);
    refcountOrder = f.u32(96);
    headerLength = f.u32(100);
    if (headerLength < V3_HEADER_MIN_BYTES || headerLength % 8 !== 0) {
      throw new ImageError('malformed', `header_length ${headerLength} is invalid: version 3 needs at least ${V3_HEADER_MIN_BYTES} and a multiple of 8`);
    }
    if (BigInt(headerLength) > clusterSize) {
      throw new ImageError('malformed', `header_length ${headerLength} is larger than the first cluster (${clusterSize} bytes)`);
    }
    if (BigInt(headerLength) > fileSize) {
      throw new ImageError('malformed', `truncated header: header_length is ${headerLength} but the file is ${fileSize} bytes`);
    }
    if (refcountOrder > 6) {
      throw new ImageError('malformed', `refcount_order ${refcountOrder} is out of range (0..6, i.e. 1- to 64-bit refcounts)`);
    }
  }

  // The whole first cluster holds the header, its extensions and (usually) the backing name;
  // clusterSize is checked above, so this read is at most 2 MiB.
  const firstClusterLength = Number(fileSize < clusterSize ? fileSize : clusterSize);
  const first = firstClusterLength <= firstBytes.length ? firstBytes : await readExact(source, 0n, firstClusterLength, 'first cluster');
  const h = new Fields(first);

  let compressionType: Qcow2Header['compressionType'] = 'zlib';
  if (version === 3 && headerLength > 104) {
    const type = h.u8(104);
    compressionType = type === 0 ? 'zlib' : type === 1 ? 'zstd' : `type ${type}`;
  }

  const extensions = readExtensions(h, headerLength, firstClusterLength);
  const featureName = (kind: FeatureKind, bit: number): string | undefined =>
    extensions.featureNames.find((n) => n.kind === kind && n.bit === bit)?.name;

  const unknown = incompatibleFeatures & ~KNOWN_INCOMPATIBLE_MASK;
  if (unknown !== 0n) {
    const bits: string[] = [];
    for (let bit = 0; bit < 64; bit++) {
      if ((unknown >> BigInt(bit)) & 1n) {
        const name = featureName('incompatible', bit);
        bits.push(name ? `bit ${bit} ("${name}")` : `bit ${bit}`);
      }
    }
    throw new ImageError('unsupported', `unknown incompatible feature ${bits.join(', ')} is set: the image uses a format feature this reader does not know, so it cannot be read safely`);
  }
  const has = (bit: number): boolean => ((incompatibleFeatures >> BigInt(bit)) & 1n) === 1n;
  const extendedL2 = has(INCOMPATIBLE.extendedL2);
  const externalData = has(INCOMPATIBLE.externalData);
  if (extendedL2 && clusterBits < MIN_EXTENDED_L2_CLUSTER_BITS) {
    throw new ImageError('malformed', `extended L2 entries need clusters of at least 16 KiB; this image has ${formatSize(clusterSize)} clusters`);
  }
  if (has(INCOMPATIBLE.compressionType) && compressionType === 'zlib') {
    throw new ImageError('malformed', 'the compression type feature bit is set but the compression_type field is missing or zero');
  }

  const cryptMethod = f.u32(32);
  if (cryptMethod > 2) throw new ImageError('unsupported', `crypt_method ${cryptMethod} is unknown (0 none, 1 AES, 2 LUKS)`);

  const checkAligned = (offset: bigint, what: string): void => {
    if (offset % clusterSize !== 0n) {
      throw new ImageError('malformed', `the ${what} offset ${hex(offset)} is not aligned to the ${formatSize(clusterSize)} cluster size`);
    }
  };
  const checkInside = (offset: bigint, length: bigint, what: string): void => {
    if (offset + length > fileSize) {
      throw new ImageError('malformed', `the ${what} (${bytesOf(length)} at offset ${hex(offset)}) extends past the end of the file (${bytesOf(fileSize)})`);
    }
  };

  const virtualSize = f.u64(24);
  const l1Entries = f.u32(36);
  const l1Offset = f.u64(40);
  const l1Bytes = BigInt(l1Entries) * 8n;
  const l1NeededBig = ceilDiv(virtualSize, guestBytesPerL2Table(clusterSize, extendedL2));
  if (BigInt(l1Entries) < l1NeededBig) {
    throw new ImageError('malformed', `the L1 table has ${l1Entries} entries but the virtual size ${bytesOf(virtualSize)} needs ${l1NeededBig}`);
  }
  if (l1Entries > 0) {
    checkAligned(l1Offset, 'L1 table');
    if (l1Offset === 0n) throw new ImageError('malformed', 'the L1 table offset is 0, which is the header');
    checkInside(l1Offset, l1Bytes, 'L1 table');
  }

  const refcountTableOffset = f.u64(48);
  const refcountTableClusters = f.u32(56);
  checkAligned(refcountTableOffset, 'refcount table');
  if (refcountTableOffset === 0n) throw new ImageError('malformed', 'the refcount table offset is 0, which is the header');
  if (refcountTableClusters === 0) throw new ImageError('malformed', 'the refcount table occupies 0 clusters');
  checkInside(refcountTableOffset, BigInt(refcountTableClusters) * clusterSize, 'refcount table');

  const snapshotCount = f.u32(60);
  const snapshotsOffset = f.u64(64);
  if (snapshotCount > 0) {
    checkAligned(snapshotsOffset, 'snapshot table');
    if (snapshotsOffset === 0n || snapshotsOffset >= fileSize) {
      throw new ImageError('malformed', `the snapshot table offset ${hex(snapshotsOffset)} is outside the file (${bytesOf(fileSize)})`);
    }
  }

  let backingFile: string | null = null;
  const backingOffset = f.u64(8);
  if (backingOffset !== 0n) {
    const length = f.u32(16);
    if (length > MAX_BACKING_NAME_BYTES) {
      throw new ImageError('malformed', `the backing file name is ${length} bytes long; the format allows at most ${MAX_BACKING_NAME_BYTES}`);
    }
    checkInside(backingOffset, BigInt(length), 'backing file name');
    const name = backingOffset + BigInt(length) <= BigInt(first.length)
      ? first.subarray(Number(backingOffset), Number(backingOffset) + length)
      : await readExact(source, backingOffset, length, 'backing file name');
    // An empty name names nothing: the image reads as if it had no backing file.
    backingFile = length === 0 ? null : decode(name);
  }

  return {
    version,
    clusterBits,
    clusterSize,
    virtualSize,
    cryptMethod,
    encryption: cryptMethod === 1 ? 'aes' : cryptMethod === 2 ? 'luks' : 'none',
    l1Entries,
    l1Offset,
    l1EntriesNeeded: Number(l1NeededBig),
    refcountTableOffset,
    refcountTableClusters,
    snapshotCount,
    snapshotsOffset,
    incompatibleFeatures,
    compatibleFeatures,
    autoclearFeatures,
    refcountOrder,
    refcountBits: 1 << refcountOrder,
    headerLength,
    compressionType,
    dirty: has(INCOMPATIBLE.dirty),
    corrupt: has(INCOMPATIBLE.corrupt),
    externalData,
    extendedL2,
    lazyRefcounts: (compatibleFeatures & 1n) === 1n,
    backingFile,
    backingFormat: extensions.backingFormat,
    externalDataFile: externalData ? extensions.externalDataFile : null,
    featureNames: extensions.featureNames,
    extensionTypes: extensions.types,
    fileSize,
  };
}

interface Extensions {
  backingFormat: string | null;
  externalDataFile: string | null;
  featureNames: FeatureName[];
  types: number[];
}

const FEATURE_KINDS: readonly FeatureKind[] = ['incompatible', 'compatible', 'autoclear'];
const FEATURE_ENTRY_BYTES = 48;

/** [SPEC "Header extensions"]: type, length, data padded to 8 bytes, until type 0 or the cluster ends. */
function readExtensions(h: Fields, start: number, limit: number): Extensions {
  const result: Extensions = { backingFormat: null, externalDataFile: null, featureNames: [], types: [] };
  let at = start;
  // Each step advances by at least 8 bytes inside a buffer of at most 2 MiB, so this ends.
  while (at + 8 <= limit) {
    const type = h.u32(at);
    const length = h.u32(at + 4);
    if (type === EXTENSION.end) break;
    const dataStart = at + 8;
    if (length > limit - dataStart) {
      throw new ImageError('malformed', `header extension ${hex(type)} at offset ${at} claims ${length} bytes, past the end of the first cluster`);
    }
    const data = h.bytes.subarray(dataStart, dataStart + length);
    result.types.push(type);
    if (type === EXTENSION.backingFormat) result.backingFormat = decode(data);
    else if (type === EXTENSION.externalDataFile) result.externalDataFile = decode(data);
    else if (type === EXTENSION.featureNames) {
      for (let e = 0; e + FEATURE_ENTRY_BYTES <= data.length; e += FEATURE_ENTRY_BYTES) {
        const kind = FEATURE_KINDS[data[e] ?? 255];
        if (kind === undefined) continue;
        const raw = data.subarray(e + 2, e + FEATURE_ENTRY_BYTES);
        const end = raw.indexOf(0);
        result.featureNames.push({ kind, bit: data[e + 1] ?? 0, name: decode(end < 0 ? raw : raw.subarray(0, end)) });
      }
    }
    at = dataStart + Math.ceil(length / 8) * 8;
  }
  return result;
}

/** Bytes of one L2 entry for this header. */
export const entryBytesOf = (header: Qcow2Header): number => Number(l2EntryBytes(header.extendedL2));
