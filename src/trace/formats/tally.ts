// What every trace reader counts while it reads, and the choice of one device or file in a trace that
// covers several (the `--device` / `--file` filter).

import { sameBytes, textOf } from '../bytes';
import type { RequestSink } from '../lookups';

export type TraceFormat = 'csv' | 'io-log-v2' | 'io-log-v3' | 'block-trace';

/** One trace line's reader: it sees each line once, in order, as a byte range. */
export interface LineParser {
  line(buf: Uint8Array, start: number, end: number, lineNumber: number): void;
}

export class ReadTally {
  /** Reads, writes and discards handed on. */
  requests = 0;
  /** Lines understood that look nothing up: flushes, syncs, file management, other events. */
  ignoredEvents = 0;
  /** Lines not understood. */
  skippedLines = 0;
  /** 1-based number of the first line not understood; 0 when every line was. */
  firstSkippedLine = 0;

  skip(lineNumber: number): void {
    this.skippedLines++;
    if (this.firstSkippedLine === 0) this.firstSkippedLine = lineNumber;
  }
}

/**
 * Keeps the requests of one stream (a block device such as `8,0`, or a file named in an I/O log): the
 * one the filter names, else the first one seen. Requests of the others are counted per name, so a
 * trace of several disks is refused with their names rather than merged into one curve.
 */
export class StreamChoice {
  private chosen: Uint8Array | undefined;
  readonly others = new Map<string, number>();
  /** Requests of the chosen stream. */
  kept = 0;

  constructor(readonly wanted: string | undefined) {
    if (wanted !== undefined) this.chosen = Buffer.from(wanted, 'utf8');
  }

  /** True when the stream named by [start, end) is the one kept. */
  accept(buf: Uint8Array, start: number, end: number): boolean {
    const chosen = this.chosen;
    if (chosen === undefined) {
      this.chosen = Uint8Array.from(buf.subarray(start, end)); // a copy: the buffer is reused
      this.kept++;
      return true;
    }
    if (sameBytes(buf, start, end, chosen)) {
      this.kept++;
      return true;
    }
    const name = textOf(buf, start, end);
    this.others.set(name, (this.others.get(name) ?? 0) + 1);
    return false;
  }

  get chosenName(): string | undefined {
    return this.chosen === undefined ? undefined : textOf(this.chosen, 0, this.chosen.length);
  }
}

/** Hands a request on and counts it. */
export function emit(tally: ReadTally, sink: RequestSink, offset: number, length: number): void {
  tally.requests++;
  sink.request(offset, length);
}
