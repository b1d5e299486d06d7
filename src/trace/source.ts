// The trace readers' only contact with the file system: a file's bytes as a stream of chunks, through
// Node's zlib when the file is gzip-compressed (told by its magic bytes 1f 8b, RFC 1952 §2.3.1, not
// by its name). Never loaded whole.

import { createReadStream, promises as fs } from 'node:fs';
import { createGunzip } from 'node:zlib';
import { fail, ok, type Outcome } from '../core/result';

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

/** Why a file cannot be opened, in words, from the system error code. */
export function describeFileError(error: unknown): string {
  const code = (error as NodeJS.ErrnoException | undefined)?.code;
  switch (code) {
    case 'ENOENT':
      return 'no such file';
    case 'EACCES':
    case 'EPERM':
      return 'permission denied';
    case 'EISDIR':
      return 'it is a folder, not a file';
    case 'Z_DATA_ERROR':
    case 'Z_BUF_ERROR':
      return `not a readable gzip stream (${error instanceof Error ? error.message : String(error)})`;
    default:
      return error instanceof Error ? error.message : String(error);
  }
}

export async function openTraceBytes(path: string): Promise<Outcome<TraceBytes>> {
  let totalBytes: number;
  let compressed: boolean;
  try {
    const handle = await fs.open(path, 'r');
    try {
      const stat = await handle.stat();
      if (stat.isDirectory()) return fail('it is a folder, not a file');
      totalBytes = stat.size;
      const magic = Buffer.alloc(2);
      const { bytesRead } = await handle.read(magic, 0, 2, 0);
      compressed = bytesRead === 2 && magic[0] === 0x1f && magic[1] === 0x8b;
    } finally {
      await handle.close();
    }
  } catch (error) {
    return fail(describeFileError(error));
  }
  const file = createReadStream(path, { highWaterMark: CHUNK_BYTES });
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
