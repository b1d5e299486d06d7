// The trace readers' only contact with the file system: a file's bytes as a stream of chunks, through
// Node's zlib when the file is gzip-compressed (told by its magic bytes 1f 8b, RFC 1952 §2.3.1, not
// by its name). Never loaded whole.

import { closeSync, createReadStream, readSync } from 'node:fs';
import { errorCode, ioMessage, openChecked } from '../files/open';
import { createGunzip } from 'node:zlib';
import { fail, ok, type Outcome } from '../core/results';

const CHUNK_BYTES = 1 << 20;

export interface TraceBytes {
  chunks: AsyncIterable<Buffer>;
  /** Bytes of the file read so far (compressed bytes for a gzip file), for progress. */
  bytesRead(): number;
  /** Size of the file on disk. */
  totalBytes: number;
  compressed: boolean;
  /** Stops reading early. */
  close(): void;
}

/** Why a file cannot be opened or read, in words. */
export function describeFileError(error: unknown): string {
  const code = errorCode(error);
  if (code === 'Z_DATA_ERROR' || code === 'Z_BUF_ERROR') return `not a readable gzip stream (${error instanceof Error ? error.message : String(error)})`;
  return ioMessage(error);
}

export async function openTraceBytes(path: string): Promise<Outcome<TraceBytes>> {
  let fd: number;
  let totalBytes: number;
  let compressed: boolean;
  try {
    // A pipe, socket or device named as a trace is refused before it can block or never end.
    const opened = openChecked(path);
    fd = opened.fd;
    totalBytes = opened.stat.size;
    const magic = Buffer.alloc(2);
    try {
      const bytesRead = readSync(fd, magic, 0, 2, 0);
      compressed = bytesRead === 2 && magic[0] === 0x1f && magic[1] === 0x8b;
    } catch (error) {
      closeSync(fd);
      throw error;
    }
  } catch (error) {
    return fail(describeFileError(error));
  }
  const file = createReadStream(path, { fd, start: 0, highWaterMark: CHUNK_BYTES });
  const chunks: AsyncIterable<Buffer> = compressed ? file.pipe(createGunzip({ chunkSize: CHUNK_BYTES })) : file;
  if (compressed) {
    // A read error on the file would otherwise not reach the gunzip stream being iterated.
    const gunzip = chunks as ReturnType<typeof createGunzip>;
    file.on('error', (error) => gunzip.destroy(error));
  }
  return ok({
    chunks,
    bytesRead: () => file.bytesRead,
    totalBytes,
    compressed,
    close: () => {
      file.destroy();
      if (compressed) (chunks as ReturnType<typeof createGunzip>).destroy();
    },
  });
}
