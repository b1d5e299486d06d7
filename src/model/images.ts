// What the linter knows of the image files a definition names. The front ends read the files (only
// src/image touches them) and hand the facts in; the linter itself stays pure.

export interface ImageLayerFacts {
  /** Absolute path of the file. */
  path: string;
  /** The backing name as the overlay's header writes it (null for the top image). */
  name: string | null;
  /** 'qcow2', 'raw', ... */
  format: string;
  virtualSize?: bigint;
  clusterSize?: bigint;
  extendedL2?: boolean;
  refcountBits?: bigint;
  /** The backing file name in this layer's header, as written. */
  backingName?: string | null;
}

export type ImageProblemKind = 'missing' | 'unreadable' | 'not-qcow2' | 'malformed' | 'unsupported' | 'cycle' | 'too-deep' | 'cancelled';

export interface ImageChainFacts {
  /** The image first, then each backing layer read (up to and including a failed one). */
  layers: ImageLayerFacts[];
  problem?: { kind: ImageProblemKind; message: string; layer: number };
}

/** Facts for an absolute image path, or undefined when the front end has not read it. */
export type ImageLookup = (absolutePath: string) => ImageChainFacts | undefined;
