// Every file cachewright reads out of a repository (definition files, mapping files, images, traces)
// is opened through here. A path in a repository can name anything: a named pipe blocks open() until
// some writer appears (a CI job would hang forever), a character device such as /dev/zero never
// ends, and opening some devices has side effects. So the type is looked at before opening, the open
// itself never blocks (O_NONBLOCK, in case the path is swapped for a pipe in between) and the opened
// handle is looked at again. Nothing here can write: every open is read-only.
import * as fs from 'node:fs';

/** What a path names, in the words a message shows. */
export type FileKind =
  | 'regular file'
  | 'directory'
  | 'named pipe (FIFO)'
  | 'socket'
  | 'character device'
  | 'block device'
  | 'symbolic link'
  | 'special file';

/** The part of fs.Stats the type decision needs (so it can be tested without such files). */
export interface StatKind {
  isFile(): boolean;
  isDirectory(): boolean;
  isFIFO(): boolean;
  isSocket(): boolean;
  isCharacterDevice(): boolean;
  isBlockDevice(): boolean;
  isSymbolicLink(): boolean;
}

export function fileKind(stat: StatKind): FileKind {
  if (stat.isFile()) return 'regular file';
  if (stat.isDirectory()) return 'directory';
  if (stat.isFIFO()) return 'named pipe (FIFO)';
  if (stat.isSocket()) return 'socket';
  if (stat.isCharacterDevice()) return 'character device';
  if (stat.isBlockDevice()) return 'block device';
  if (stat.isSymbolicLink()) return 'symbolic link';
  return 'special file';
}

export interface KindPolicy {
  /** Block devices hold qcow2 images on logical volumes; text files never sit on one. */
  blockDevices?: boolean;
}

/** Undefined when a path of this kind may be opened and read; else why not, as "is a ..., not a ..." */
export function refusedKind(stat: StatKind, policy: KindPolicy = {}): string | undefined {
  const kind = fileKind(stat);
  if (kind === 'regular file' || (kind === 'block device' && policy.blockDevices === true)) return undefined;
  const article = kind === 'directory' ? 'a directory' : `a ${kind}`;
  return `is ${article}, not a regular file${policy.blockDevices === true ? ' or block device' : ''}`;
}

/**
 * Read-only and non-blocking: a pipe that appeared between the type check and the open opens at once
 * (and is refused by the second check) instead of waiting for a writer; O_NOCTTY keeps a terminal
 * from becoming the process's controlling terminal. Reads from regular files and block devices
 * ignore O_NONBLOCK. Platforms without these flags get plain read-only.
 */
export const READ_FLAGS = fs.constants.O_RDONLY | (fs.constants.O_NONBLOCK ?? 0) | (fs.constants.O_NOCTTY ?? 0);

/** A failure to open or read, with the reason a caller maps to its own message or problem kind. */
export class FileReadError extends Error {
  constructor(
    readonly reason: 'missing' | 'kind' | 'too-large' | 'io',
    message: string,
    readonly code?: string,
    /** For `too-large`: the bytes the file holds (at least). */
    readonly size?: number,
  ) {
    super(message);
    this.name = 'FileReadError';
  }
}

/** Plain words for the system errors a repository can cause. */
export function ioMessage(error: unknown): string {
  if (error instanceof FileReadError) return error.message;
  switch (errorCode(error)) {
    case 'ENOENT':
      return 'no such file or directory';
    case 'ENOTDIR':
      return 'a part of the path is not a directory';
    case 'EACCES':
    case 'EPERM':
      return 'permission denied';
    case 'EISDIR':
      return 'is a directory, not a file';
    case 'ELOOP':
      return 'too many levels of symbolic links';
    case 'ENXIO':
      return 'no such device (a socket or a device without a driver)';
    default:
      return error instanceof Error ? error.message : String(error);
  }
}

export const errorCode = (error: unknown): string =>
  typeof error === 'object' && error !== null && 'code' in error ? String(error.code) : '';

const MISSING = new Set(['ENOENT', 'ENOTDIR']);

function asReadError(error: unknown): FileReadError {
  if (error instanceof FileReadError) return error;
  const code = errorCode(error);
  return new FileReadError(MISSING.has(code) ? 'missing' : 'io', ioMessage(error), code || undefined);
}

/** Opens `path` for reading after checking its type before and after the open; throws FileReadError. */
export function openChecked(path: string, policy: KindPolicy = {}): { fd: number; stat: fs.Stats } {
  let fd: number;
  try {
    const refused = refusedKind(fs.statSync(path), policy);
    if (refused) throw new FileReadError('kind', refused);
    fd = fs.openSync(path, READ_FLAGS);
  } catch (error) {
    throw asReadError(error);
  }
  try {
    const stat = fs.fstatSync(fd);
    const refused = refusedKind(stat, policy);
    if (refused) throw new FileReadError('kind', refused);
    return { fd, stat };
  } catch (error) {
    fs.closeSync(fd);
    throw asReadError(error);
  }
}

/**
 * Definition files above this many bytes are not read: the YAML document model needs many times a
 * file's size in memory, and a file this large is generated, not written by hand. A CLI option and
 * an editor setting change it.
 */
export const DEFINITION_SIZE_LIMIT = 32 * 1024 * 1024;

/** A mapping file is a page of settings; anything far larger is not one (and is not read whole). */
export const MAPPING_SIZE_LIMIT = 4 * 1024 * 1024;

/** The largest limit a user may set: far below the longest string the JavaScript engine can hold (about 512 Mi characters). */
export const MAX_FILE_SIZE_LIMIT = 256 * 1024 * 1024;

export interface ReadLimit {
  /** Bytes above which the file is not read at all (its size comes from the file's metadata). */
  maxBytes?: number;
}

/**
 * The whole content of a regular file, or a FileReadError: `kind` for a directory, pipe, socket or
 * device, `too-large` (without reading a byte) above `maxBytes`, `missing`, `io`. A file that grows
 * while it is read stops at the limit rather than at its end, so memory stays bounded.
 */
export function readRegularFile(path: string, limit: ReadLimit = {}): Buffer {
  const { fd, stat } = openChecked(path);
  try {
    const max = limit.maxBytes ?? Number.MAX_SAFE_INTEGER;
    if (stat.size > max) throw new FileReadError('too-large', `is ${stat.size} bytes, above the limit of ${max} bytes`, undefined, stat.size);
    // One byte more than the metadata says, so the end shows without a second buffer.
    let buffer = Buffer.allocUnsafe(Math.min(stat.size, max) + 1);
    let total = 0;
    for (;;) {
      if (total === buffer.length) {
        if (total > max) throw new FileReadError('too-large', `grew above the limit of ${max} bytes while it was read`, undefined, total);
        const bigger = Buffer.allocUnsafe(Math.min(buffer.length * 2, max + 1));
        buffer.copy(bigger, 0, 0, total);
        buffer = bigger;
      }
      const got = fs.readSync(fd, buffer, total, buffer.length - total, null);
      if (got === 0) break;
      total += got;
    }
    if (total > max) throw new FileReadError('too-large', `grew above the limit of ${max} bytes while it was read`, undefined, total);
    return buffer.subarray(0, total);
  } catch (error) {
    throw asReadError(error);
  } finally {
    fs.closeSync(fd);
  }
}

/** The same as readRegularFile, decoded as UTF-8 (a byte order mark stays: callers strip it). */
export const readRegularText = (path: string, limit: ReadLimit = {}): string => readRegularFile(path, limit).toString('utf8');

/**
 * The size of something that can only be read, not asked (a block device reports size 0 in its
 * metadata): the first offset at which a one-byte read finds nothing, by doubling then bisecting.
 * About 2 log2(size) reads. `hasByteAt` must be true exactly below the end.
 */
export function sizeByProbing(hasByteAt: (offset: number) => boolean, ceiling = Number.MAX_SAFE_INTEGER): number {
  if (!hasByteAt(0)) return 0;
  let inside = 0; // known to hold a byte
  let outside = 1; // past the end, or the ceiling
  while (outside < ceiling && hasByteAt(outside)) {
    inside = outside;
    outside = Math.min(outside * 2, ceiling);
  }
  while (outside - inside > 1) {
    const middle = inside + Math.floor((outside - inside) / 2);
    if (hasByteAt(middle)) inside = middle;
    else outside = middle;
  }
  return inside + 1;
}

/** The size of an opened block device, by probing with one-byte positioned reads. */
export function blockDeviceSize(fd: number): number {
  const probe = Buffer.alloc(1);
  return sizeByProbing((offset) => fs.readSync(fd, probe, 0, 1, offset) === 1);
}
