// Splits a stream of byte chunks into lines without decoding them. A line split across two chunks is
// joined in a small carry buffer; a "line" longer than MAX_LINE_BYTES (a binary file, say) is not
// kept whole: it is reported as one overlong line, so memory stays bounded whatever the input.

const NEWLINE = 0x0a;
export const MAX_LINE_BYTES = 64 * 1024;

export interface LineHandler {
  line(buf: Uint8Array, start: number, end: number, lineNumber: number): void;
  /** A line too long to be a trace line (reported once per such line). */
  overlong(lineNumber: number): void;
}

export class LineSplitter {
  private carry: Buffer | undefined;
  private dropping = false;
  lineNumber = 0;

  /** Who gets the lines; may change between chunks (the format detector hands over to a parser). */
  constructor(public handler: LineHandler) {}

  push(chunk: Buffer): void {
    let position = 0;
    const length = chunk.length;
    if (this.carry !== undefined || this.dropping) {
      const newline = chunk.indexOf(NEWLINE);
      if (newline === -1) {
        this.keep(chunk, 0, length);
        return;
      }
      this.keep(chunk, 0, newline);
      this.flushCarry();
      position = newline + 1;
    }
    const handler = this.handler;
    for (;;) {
      const newline = chunk.indexOf(NEWLINE, position);
      if (newline === -1) break;
      handler.line(chunk, position, newline, ++this.lineNumber);
      position = newline + 1;
    }
    if (position < length) this.keep(chunk, position, length);
  }

  /** The last line, when the stream does not end with a newline. */
  end(): void {
    if (this.carry !== undefined || this.dropping) this.flushCarry();
  }

  private keep(chunk: Buffer, start: number, end: number): void {
    if (this.dropping) return;
    const piece = chunk.subarray(start, end);
    const carried = this.carry === undefined ? Buffer.from(piece) : Buffer.concat([this.carry, piece]);
    if (carried.length > MAX_LINE_BYTES) {
      this.carry = undefined;
      this.dropping = true;
    } else {
      this.carry = carried;
    }
  }

  private flushCarry(): void {
    const lineNumber = ++this.lineNumber;
    if (this.dropping) this.handler.overlong(lineNumber);
    else if (this.carry !== undefined) this.handler.line(this.carry, 0, this.carry.length, lineNumber);
    this.carry = undefined;
    this.dropping = false;
  }
}
