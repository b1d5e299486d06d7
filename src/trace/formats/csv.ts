// CSV traces: `offset,length[,op]` in bytes, one request per line, an optional header line first
// (docs/cli.md). op is read/r, write/w, discard/d or trim/t (each looks up), flush/f or sync/s (no
// lookup); a missing op is a request. Lines starting with '#' are comments.

import { ascii, equalsWord, Fields, isBlankRange, readUnsigned } from '../bytes';
import type { RequestSink } from '../lookups';
import { emit, type LineParser, type ReadTally } from './tally';

const COMMA = 0x2c;
const HASH = 0x23;
const LOOKUP_OPS = ['read', 'r', 'write', 'w', 'discard', 'd', 'trim', 't'].map(ascii);
const NO_LOOKUP_OPS = ['flush', 'f', 'sync', 's'].map(ascii);

export class CsvParser implements LineParser {
  private readonly fields = new Fields();
  private seenContent = false;

  constructor(private readonly tally: ReadTally, private readonly sink: RequestSink) {}

  line(buf: Uint8Array, start: number, end: number, lineNumber: number): void {
    if (isBlankRange(buf, start, end)) return;
    if (buf[start] === HASH) return;
    const fields = this.fields;
    const first = !this.seenContent;
    this.seenContent = true;
    const count = fields.splitAt(buf, start, end, COMMA);
    const offset = count >= 2 && count <= 3 ? readUnsigned(buf, fields.start(0), fields.end(0)) : -1;
    const length = offset >= 0 ? readUnsigned(buf, fields.start(1), fields.end(1)) : -1;
    if (offset < 0 || length < 0) {
      // The header, if any, is the first line that is not blank or a comment.
      if (!first || count < 2 || count > 3) this.tally.skip(lineNumber);
      return;
    }
    if (count === 3 && fields.end(2) > fields.start(2)) {
      const s = fields.start(2);
      const e = fields.end(2);
      if (NO_LOOKUP_OPS.some((op) => equalsWord(buf, s, e, op, true))) {
        this.tally.ignoredEvents++;
        return;
      }
      if (!LOOKUP_OPS.some((op) => equalsWord(buf, s, e, op, true))) {
        this.tally.skip(lineNumber);
        return;
      }
    }
    if (length === 0) this.tally.ignoredEvents++;
    else emit(this.tally, this.sink, offset, length);
  }
}
