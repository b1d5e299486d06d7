// Block-layer trace text: the default output of the kernel tracer's text dumper (its manual page,
// "DEFAULT OUTPUT"): a header "%D %2c %8s %5T.%9t %5p %2a %3d" (device major,minor; CPU; sequence;
// seconds.nanoseconds; process id; action; RWBS), then for queued (Q) and issued (D) events
// "SECTOR + BLOCKS [command]". Sectors are 512 bytes (docs/sources.md). RWBS holds R (read), W (write) or D
// (discard), optionally with B (barrier), S (sync) and other letters; an event with none of R, W, D
// (a bare flush) looks nothing up.
//
// The requests the driver sees are the ones issued to the device (D); a trace recorded without them
// is read from its queued events (Q) instead: the reader runs once for D and, when it finds none,
// once more for Q.
//
// After the events the dumper prints per-CPU and total statistics ("CPU0 (8,0):", "Total (8,0):");
// from the first such line on, the rest of the file is that summary and not counted as unknown.

import { Fields, isBlankRange, isDecimal, readUnsigned } from '../bytes';
import type { RequestSink } from '../lookups';
import { emit, type LineParser, type ReadTally, type StreamChoice } from './tally';
import { atIndex } from '../../core/indexed';

export const SECTOR_BYTES = 512;
const COMMA = 0x2c;
const PLUS = 0x2b;
const LETTER_D = 0x44;
const LETTER_Q = 0x51;
const LETTER_R = 0x52;
const LETTER_W = 0x57;

export type BlockEvent = 'D' | 'Q';

/** The event line shape, for format detection: "  8,0    3        1     0.000000000   697  D   W 223490 + 8 [cmd]". */
export const BLOCK_TRACE_EVENT = /^\s*\d+,\d+\s+\d+\s+\d+\s+\d+\.\d+\s+\d+\s+[A-Za-z]{1,2}\b/;
const SUMMARY_START = /^(CPU\d+|Total) \(/;

export class BlockTraceParser implements LineParser {
  private readonly fields = new Fields();
  private inSummary = false;
  private readonly wanted: number;
  /** Request-bearing events of the other kind (Q while reading D): tells whether a Q pass is worth it. */
  otherKindRequests = 0;

  constructor(
    readonly event: BlockEvent,
    private readonly tally: ReadTally,
    private readonly sink: RequestSink,
    private readonly streams: StreamChoice,
  ) {
    this.wanted = event === 'D' ? LETTER_D : LETTER_Q;
  }

  line(buf: Uint8Array, start: number, end: number, lineNumber: number): void {
    if (this.inSummary || isBlankRange(buf, start, end)) {
      if (this.inSummary) this.tally.ignoredEvents++;
      return;
    }
    const fields = this.fields;
    const count = fields.splitWhitespace(buf, start, end);
    if (count < 7 || !this.isEventHeader(buf, fields)) {
      if (SUMMARY_START.test(Buffer.from(buf.buffer, buf.byteOffset + start, Math.min(end - start, 16)).toString('latin1'))) {
        this.inSummary = true;
        this.tally.ignoredEvents++;
      } else {
        this.tally.skip(lineNumber);
      }
      return;
    }
    const actionStart = fields.start(5);
    const action = fields.end(5) - actionStart === 1 ? (atIndex(buf, actionStart)) : 0;
    const hasRange = count >= 10 && fields.end(8) - fields.start(8) === 1 && buf[fields.start(8)] === PLUS;
    if ((action !== LETTER_D && action !== LETTER_Q) || !hasRange || !this.looksUp(buf, fields.start(6), fields.end(6))) {
      this.tally.ignoredEvents++;
      return;
    }
    const sector = readUnsigned(buf, fields.start(7), fields.end(7));
    const blocks = readUnsigned(buf, fields.start(9), fields.end(9));
    if (sector < 0 || blocks < 0) {
      this.tally.skip(lineNumber);
      return;
    }
    if (blocks === 0 || action !== this.wanted) {
      if (blocks !== 0 && this.streams.wanted === undefined) this.otherKindRequests++;
      else if (blocks !== 0 && this.isWantedDevice(buf, fields)) this.otherKindRequests++;
      this.tally.ignoredEvents++;
      return;
    }
    if (this.streams.accept(buf, fields.start(0), fields.end(0))) emit(this.tally, this.sink, sector * SECTOR_BYTES, blocks * SECTOR_BYTES);
  }

  /** Device "major,minor", a time stamp with a fraction and a numeric process id in their places. */
  private isEventHeader(buf: Uint8Array, fields: Fields): boolean {
    let comma = false;
    for (let i = fields.start(0); i < fields.end(0); i++) if (buf[i] === COMMA) comma = true;
    return comma && isDecimal(buf, fields.start(3), fields.end(3)) && readUnsigned(buf, fields.start(4), fields.end(4)) >= 0;
  }

  /** RWBS with R, W or D: a read, a write or a discard. */
  private looksUp(buf: Uint8Array, start: number, end: number): boolean {
    for (let i = start; i < end; i++) {
      const c = buf[i];
      if (c === LETTER_R || c === LETTER_W || c === LETTER_D) return true;
    }
    return false;
  }

  private isWantedDevice(buf: Uint8Array, fields: Fields): boolean {
    const wanted = this.streams.wanted ?? '';
    return Buffer.from(buf.buffer, buf.byteOffset + fields.start(0), fields.end(0) - fields.start(0)).toString('latin1') === wanted;
  }
}
