// Backing chains: each qcow2 layer names its backing file relative to its own folder and may name
// its format in a header extension. A raw (or other non-qcow2) backing file ends the chain.
import { realpath } from 'node:fs/promises';
import { dirname, isAbsolute, join } from 'node:path';
import { ImageError, throwIfAborted, toProblem, type ImageProblem } from './errors';
import { QCOW2_MAGIC, readHeader, type Qcow2Header } from './header';
import { FileByteSource } from './source';

/** [common practice] deep enough for any real snapshot chain, small enough to stop a runaway. */
export const DEFAULT_MAX_CHAIN_DEPTH = 64;

export interface ChainLayer {
  /** The layer's path: the image as given, then each backing name joined to its parent's folder. */
  path: string;
  /** The backing name as the parent's header writes it; null for the image itself. */
  name: string | null;
  /** 'qcow2', 'raw', or whatever format the parent's header names. */
  format: string;
  /** Where the format came from: the parent's backing-format extension, or probing the file's magic. */
  formatFrom: 'image' | 'header' | 'probed';
  /** The parsed header for qcow2 layers. */
  header: Qcow2Header | null;
  /** qcow2: the header's virtual size; raw: the file size; otherwise null. */
  virtualSize: bigint | null;
  /** Why this layer could not be read; the chain stops at a layer with an error. */
  error: ImageProblem | null;
}

export interface ChainOptions {
  /** Layers counted with the image itself; default 64. */
  maxDepth?: number;
  signal?: AbortSignal;
  /** Follow backing files (default true). */
  followChain?: boolean;
  /** Blocking positioned reads (default true); see FileSourceOptions.blocking. */
  blockingReads?: boolean;
}

/** Called for each readable qcow2 layer while its file is open (the inspector walks it here). */
export type LayerVisitor = (layer: ChainLayer, source: FileByteSource, index: number) => Promise<void>;

const NOT_A_PATH = /^(json:|[a-z][a-z0-9+.-]*:\/\/)/i;

export function resolveBackingPath(imagePath: string, name: string): string {
  return isAbsolute(name) ? name : join(dirname(imagePath), name);
}

/** Headers of the image and its backing files, top first; never throws for a bad file. */
export async function readChain(path: string, options: ChainOptions = {}): Promise<ChainLayer[]> {
  return visitChain(path, options);
}

export async function visitChain(path: string, options: ChainOptions = {}, visit?: LayerVisitor): Promise<ChainLayer[]> {
  const maxDepth = options.maxDepth ?? DEFAULT_MAX_CHAIN_DEPTH;
  const layers: ChainLayer[] = [];
  const seen = new Map<string, number>();
  let next: { path: string; name: string | null; format: string | null } | null = { path, name: null, format: 'qcow2' };

  while (next) {
    const current: { path: string; name: string | null; format: string | null } = next;
    next = null;
    const layer: ChainLayer = {
      path: current.path,
      name: current.name,
      format: current.format ?? 'qcow2',
      formatFrom: current.name === null ? 'image' : current.format === null ? 'probed' : 'header',
      header: null,
      virtualSize: null,
      error: null,
    };
    layers.push(layer);
    try {
      throwIfAborted(options.signal);
      if (current.name !== null && NOT_A_PATH.test(current.name)) {
        throw new ImageError('unsupported', `backing "${current.name}" is not a file path; only files can be followed`);
      }
      if (layers.length > maxDepth) {
        throw new ImageError('too-deep', `the backing chain is deeper than ${maxDepth} layers; stopped here`);
      }
      const real = await realpath(current.path);
      const earlier = seen.get(real);
      if (earlier !== undefined) {
        const first = layers[earlier];
        throw new ImageError('cycle', `the backing chain refers back to ${first?.path ?? real} (layer ${earlier + 1}): a cycle`);
      }
      seen.set(real, layers.length - 1);
      const source = await FileByteSource.open(current.path, { blocking: options.blockingReads });
      try {
        if (current.format === null) layer.format = (await hasQcow2Magic(source)) ? 'qcow2' : 'raw';
        if (layer.format !== 'qcow2') {
          // A raw layer's guest view is the file itself; other formats are named but not read.
          layer.virtualSize = layer.format === 'raw' ? BigInt(await source.size()) : null;
          break;
        }
        const header = await readHeader(source);
        layer.header = header;
        layer.virtualSize = header.virtualSize;
        if (visit) await visit(layer, source, layers.length - 1);
        if (header.backingFile !== null && options.followChain !== false) {
          next = { path: resolveBackingPath(current.path, header.backingFile), name: header.backingFile, format: header.backingFormat };
        }
      } finally {
        await source.close();
      }
    } catch (error) {
      layer.error = toProblem(error, current.path);
      break;
    }
  }
  return layers;
}

async function hasQcow2Magic(source: FileByteSource): Promise<boolean> {
  const start = await source.read(0, 4);
  return start.length === 4 && new DataView(start.buffer, start.byteOffset, 4).getUint32(0) === QCOW2_MAGIC;
}

/** The first problem in a chain, if any. */
export function chainProblem(layers: readonly ChainLayer[]): (ImageProblem & { layer: number }) | null {
  const index = layers.findIndex((l) => l.error !== null);
  const failed = layers[index];
  return failed?.error ? { ...failed.error, layer: index } : null;
}
