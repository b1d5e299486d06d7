// The I/O log of the flexible I/O tester (docs/sources.md; its manual page, "Trace file format v2/v3"):
// a first line `fio version 2 iolog` or `fio version 3 iolog`, then
//   v2: FILE add|open|close            and  FILE ACTION OFFSET LENGTH
//   v3: TIME FILE add|open|close       and  TIME FILE ACTION OFFSET LENGTH
// ACTION read, write and trim look up; sync, datasync and (v2) wait do not. FILE may hold spaces, so
// a line is read from its end: the last fields are the action and its numbers.

import { ascii, equalsWord, Fields, isBlankRange, readUnsigned } from '../bytes';
import type { RequestSink } from '../lookups';
import { emit, type LineParser, type ReadTally, type StreamChoice } from './tally';

const READ = ascii('read');
const WRITE = ascii('write');
const TRIM = ascii('trim');
const NO_LOOKUP_ACTIONS = ['sync', 'datasync', 'wait'].map(ascii);
const FILE_ACTIONS = ['add', 'open', 'close'].map(ascii);

/** The header line of each version, as the tester writes it. */
export const IO_LOG_HEADERS = { 2: 'fio version 2 iolog', 3: 'fio version 3 iolog' } as const;

export class IoLogParser implements LineParser {
  private readonly fields = new Fields();
  private headerSeen = false;
  /** Fields before the file name: the time stamp in version 3. */
  private readonly lead: number;

  constructor(
    version: 2 | 3,
    private readonly tally: ReadTally,
    private readonly sink: RequestSink,
    private readonly streams: StreamChoice,
  ) {
    this.lead = version === 3 ? 1 : 0;
  }

  line(buf: Uint8Array, start: number, end: number, lineNumber: number): void {
    if (isBlankRange(buf, start, end)) return;
    if (!this.headerSeen) {
      // The detector chose this reader from the header, which is the first line with content.
      this.headerSeen = true;
      return;
    }
    const fields = this.fields;
    const count = fields.splitWhitespace(buf, start, end);
    const lead = this.lead;
    if (count > 32 || (lead === 1 && readUnsigned(buf, fields.start(0), fields.end(0)) < 0)) {
      this.tally.skip(lineNumber);
      return;
    }
    if (count >= lead + 4) {
      const actionStart = fields.start(count - 3);
      const actionEnd = fields.end(count - 3);
      const offset = readUnsigned(buf, fields.start(count - 2), fields.end(count - 2));
      const length = readUnsigned(buf, fields.start(count - 1), fields.end(count - 1));
      if (offset >= 0 && length >= 0) {
        const looksUp =
          equalsWord(buf, actionStart, actionEnd, READ) || equalsWord(buf, actionStart, actionEnd, WRITE) || equalsWord(buf, actionStart, actionEnd, TRIM);
        if (looksUp) {
          if (length === 0) this.tally.ignoredEvents++;
          else if (this.streams.accept(buf, fields.start(lead), fields.end(count - 4))) emit(this.tally, this.sink, offset, length);
          return;
        }
        if (NO_LOOKUP_ACTIONS.some((word) => equalsWord(buf, actionStart, actionEnd, word))) {
          this.tally.ignoredEvents++;
          return;
        }
      }
    }
    if (count >= lead + 2 && FILE_ACTIONS.some((word) => equalsWord(buf, fields.start(count - 1), fields.end(count - 1), word))) {
      this.tally.ignoredEvents++;
      return;
    }
    this.tally.skip(lineNumber);
  }
}
