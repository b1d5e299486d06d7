// Every way reading an image can fail, as one error type with a kind the callers can act on:
// the linter maps `cycle` to backing-chain-cycle and the other failure kinds to image-unreadable.

export type ImageErrorKind =
  /** the file (or a backing file) does not exist */
  | 'missing'
  /** the file exists but cannot be read: permissions, a directory, an I/O error */
  | 'unreadable'
  /** the file is readable but does not start with the qcow2 magic */
  | 'not-qcow2'
  /** a qcow2 image whose header or tables are inconsistent with the file or the format */
  | 'malformed'
  /** a well-formed image using something this reader does not know (version, incompatible feature) */
  | 'unsupported'
  /** a backing chain that refers back to one of its own layers */
  | 'cycle'
  /** a backing chain longer than the depth limit */
  | 'too-deep'
  /** the caller's AbortSignal fired */
  | 'cancelled';

export class ImageError extends Error {
  constructor(
    readonly kind: ImageErrorKind,
    message: string,
  ) {
    super(message);
    this.name = 'ImageError';
  }
}

/** The plain-data form of a failure, as reports carry it. */
export interface ImageProblem {
  kind: ImageErrorKind;
  message: string;
}

const MISSING_CODES = new Set(['ENOENT', 'ENOTDIR']);

/** Turns anything thrown while reading `path` into a problem with a message that names the file. */
export function toProblem(error: unknown, path: string): ImageProblem {
  if (error instanceof ImageError) return { kind: error.kind, message: `${path}: ${error.message}` };
  const code = typeof error === 'object' && error !== null && 'code' in error ? String(error.code) : '';
  if (MISSING_CODES.has(code)) return { kind: 'missing', message: `${path}: no such file` };
  if (code === 'EACCES' || code === 'EPERM') return { kind: 'unreadable', message: `${path}: permission denied` };
  if (code === 'EISDIR') return { kind: 'unreadable', message: `${path}: is a directory, not an image file` };
  if (code === 'ABORT_ERR') return { kind: 'cancelled', message: `${path}: cancelled` };
  const detail = error instanceof Error ? error.message : String(error);
  return { kind: 'unreadable', message: `${path}: cannot be read (${detail})` };
}

export function throwIfAborted(signal: AbortSignal | undefined): void {
  if (signal?.aborted) throw new ImageError('cancelled', 'cancelled');
}
