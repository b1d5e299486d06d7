// The reader sees an image only through positioned reads, so it runs the same over a file handle,
// an in-memory buffer (tests, fuzzing) or anything an editor hands it. Nothing here can write.
import { readSync } from 'node:fs';
import { open, stat, type FileHandle } from 'node:fs/promises';
import { blockDeviceSize, READ_FLAGS, refusedKind } from '../files/open';
import { ImageError } from './errors';

export interface ByteSource {
  /** Bytes in the source. */
  size(): Promise<bigint | number>;
  /** Up to `length` bytes from `offset`; fewer only where the source ends. */
  read(offset: bigint | number, length: number): Promise<Uint8Array>;
  /**
   * Optional fast path: fills `target` from `offset` and returns the bytes read, so the metadata walk
   * can reuse a few buffers instead of allocating one per L2 table.
   */
  readInto?(offset: number, target: Uint8Array): Promise<number>;
  /** Optional blocking form of readInto, for sources whose reads are cheap and local. */
  readIntoSync?(offset: number, target: Uint8Array): number;
  close?(): Promise<void>;
}

export interface FileSourceOptions {
  /**
   * Read with blocking positioned reads (default) rather than through the thread pool. One read is at
   * most one cluster (2 MiB) and the walk yields to the event loop every few milliseconds, so the
   * caller stays responsive; a thread-pool round trip per L2 table would cost more than the read.
   * Pass false on file systems that can stall (network mounts) when blocking is not acceptable.
   */
  blocking?: boolean;
}

/**
 * An image file (or a block device holding one, as a logical volume does) opened read-only: the
 * handle has no write access at all. Anything else (a pipe, a socket, a character device, a folder)
 * is refused before it is opened, so nothing a repository names can make the open wait.
 */
export class FileByteSource implements ByteSource {
  private constructor(
    private readonly handle: FileHandle,
    private readonly bytes: number,
    private readonly blocking: boolean,
  ) {
    if (blocking) this.readIntoSync = (offset, target) => this.fill(offset, target);
  }

  static async open(path: string, options: FileSourceOptions = {}): Promise<FileByteSource> {
    const refusedBefore = refusedKind(await stat(path), IMAGE_KINDS);
    if (refusedBefore) throw new ImageError('unreadable', refusedBefore);
    // Non-blocking, in case a pipe took the path's place since the check above.
    const handle = await open(path, READ_FLAGS);
    try {
      const opened = await handle.stat();
      const refused = refusedKind(opened, IMAGE_KINDS);
      if (refused) throw new ImageError('unreadable', refused);
      // A block device's metadata says size 0: its end is found by reading.
      const size = opened.isBlockDevice() ? blockDeviceSize(handle.fd) : opened.size;
      return new FileByteSource(handle, size, options.blocking !== false);
    } catch (error) {
      await handle.close();
      throw error;
    }
  }

  async size(): Promise<number> {
    return this.bytes;
  }

  async read(offset: bigint | number, length: number): Promise<Uint8Array> {
    const target = new Uint8Array(length);
    const got = await this.readInto(Number(offset), target);
    return got === length ? target : target.subarray(0, got);
  }

  async readInto(offset: number, target: Uint8Array): Promise<number> {
    if (this.blocking) return this.fill(offset, target);
    let done = 0;
    while (done < target.length) {
      const { bytesRead } = await this.handle.read(target, done, target.length - done, offset + done);
      if (bytesRead === 0) break;
      done += bytesRead;
    }
    return done;
  }

  private fill(offset: number, target: Uint8Array): number {
    let done = 0;
    while (done < target.length) {
      const bytesRead = readSync(this.handle.fd, target, done, target.length - done, offset + done);
      if (bytesRead === 0) break;
      done += bytesRead;
    }
    return done;
  }

  /** Present only in blocking mode, so the walk takes its synchronous path only then. */
  readonly readIntoSync?: (offset: number, target: Uint8Array) => number;

  async close(): Promise<void> {
    await this.handle.close();
  }
}

const IMAGE_KINDS = { blockDevices: true } as const;

/** A source over bytes already in memory. */
export class MemoryByteSource implements ByteSource {
  constructor(private readonly bytes: Uint8Array) {}

  async size(): Promise<number> {
    return this.bytes.length;
  }

  async read(offset: bigint | number, length: number): Promise<Uint8Array> {
    const start = Math.min(Number(offset), this.bytes.length);
    return this.bytes.slice(start, Math.min(start + length, this.bytes.length));
  }

  async readInto(offset: number, target: Uint8Array): Promise<number> {
    const part = await this.read(offset, target.length);
    target.set(part);
    return part.length;
  }
}
