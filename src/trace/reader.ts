// Reads one trace file, streamed: detects its format from the first lines, hands each read, write
// and discard to a request sink, and counts what it could not use. Problems come back as an Outcome
// whose message names the file, never as an exception.

import { fail, ok, type Outcome } from '../core/results';
import { textOf, isBlankRange } from './bytes';
import { DETECTION_LINES, FORMATS_ACCEPTED, formatOfLine } from './detect';
import { BlockTraceParser, type BlockEvent } from './formats/block-trace';
import { CsvParser } from './formats/csv';
import { IoLogParser } from './formats/io-log';
import { ReadTally, StreamChoice, type LineParser, type TraceFormat } from './formats/tally';
import { LineSplitter, type LineHandler } from './lines';
import type { RequestSink } from './lookups';
import { describeFileError, openTraceBytes } from './source';

/** Which device (block-trace text, `major,minor`) or file (I/O log) to keep when a trace covers several. */
export interface TraceFilter {
  device?: string;
  file?: string;
}

export interface TraceFileReport {
  /** The file as the user named it. */
  path: string;
  format: TraceFormat;
  /** Reads, writes and discards handed to the sink. */
  requests: number;
  ignoredEvents: number;
  skippedLines: number;
  /** 1-based; 0 when every line was understood. */
  firstSkippedLine: number;
  /** The device or file whose requests were kept, for formats that name one. */
  stream?: string;
  /** Block-trace text: the events read, issued (D) or, lacking those, queued (Q). */
  event?: BlockEvent;
  compressed: boolean;
}

export interface ReadOptions {
  filter?: TraceFilter;
  /** Called after each chunk with the file bytes read so far and the file's size. */
  onProgress?(bytesRead: number, totalBytes: number): void;
}

/** A parser plus the overlong-line rule every format shares. */
class ParserLines implements LineHandler {
  constructor(readonly parser: LineParser, private readonly tally: ReadTally) {}
  line(buf: Uint8Array, start: number, end: number, lineNumber: number): void {
    this.parser.line(buf, start, end, lineNumber);
  }
  overlong(lineNumber: number): void {
    this.tally.skip(lineNumber);
  }
}

interface Pending {
  bytes: Buffer | undefined; // undefined: an overlong line
  lineNumber: number;
}

/** Holds the first lines until one shows the format, then replays them to that format's parser. */
class Detector implements LineHandler {
  private readonly pending: Pending[] = [];
  seen = 0;
  format: TraceFormat | undefined;
  gaveUp = false;
  private chosen: LineHandler | undefined;

  constructor(private readonly choose: (format: TraceFormat) => LineHandler, private readonly splitter: LineSplitter) {}

  line(buf: Uint8Array, start: number, end: number, lineNumber: number): void {
    // The rest of the chunk in which the format was found still comes here.
    if (this.chosen !== undefined) return this.chosen.line(buf, start, end, lineNumber);
    if (this.gaveUp || isBlankRange(buf, start, end)) return;
    this.pending.push({ bytes: Buffer.from(buf.subarray(start, end)), lineNumber });
    const format = formatOfLine(textOf(buf, start, end), this.seen++);
    if (format !== undefined) this.decide(format);
    else if (this.seen >= DETECTION_LINES) this.gaveUp = true;
  }

  overlong(lineNumber: number): void {
    if (this.chosen !== undefined) return this.chosen.overlong(lineNumber);
    if (this.gaveUp) return;
    this.pending.push({ bytes: undefined, lineNumber });
    if (++this.seen >= DETECTION_LINES) this.gaveUp = true;
  }

  private decide(format: TraceFormat): void {
    this.format = format;
    const handler = this.choose(format);
    this.splitter.handler = handler;
    this.chosen = handler;
    for (const { bytes, lineNumber } of this.pending) {
      if (bytes === undefined) handler.overlong(lineNumber);
      else handler.line(bytes, 0, bytes.length, lineNumber);
    }
    this.pending.length = 0;
  }
}

interface Pass {
  format: TraceFormat | undefined;
  /** Lines with content seen while the format was unknown. */
  undetectedLines: number;
  tally: ReadTally;
  streams: StreamChoice;
  block?: BlockTraceParser;
}

async function readPass(
  path: string,
  sink: RequestSink,
  options: ReadOptions,
  event: BlockEvent,
  known: TraceFormat | undefined,
): Promise<Outcome<Pass & { compressed: boolean }>> {
  const opened = await openTraceBytes(path);
  if (!opened.ok) return opened;
  const source = opened.value;
  const tally = new ReadTally();
  const pass: Pass = { format: known, undetectedLines: 0, tally, streams: new StreamChoice(undefined) };
  const choose = (format: TraceFormat): LineHandler => {
    pass.format = format;
    let parser: LineParser;
    if (format === 'csv') parser = new CsvParser(tally, sink);
    else if (format === 'block-trace') {
      pass.streams = new StreamChoice(options.filter?.device);
      pass.block = new BlockTraceParser(event, tally, sink, pass.streams);
      parser = pass.block;
    } else {
      pass.streams = new StreamChoice(options.filter?.file);
      parser = new IoLogParser(format === 'io-log-v2' ? 2 : 3, tally, sink, pass.streams);
    }
    return new ParserLines(parser, tally);
  };
  const splitter = new LineSplitter({ line: () => undefined, overlong: () => undefined });
  const detector = new Detector(choose, splitter);
  splitter.handler = known === undefined ? detector : choose(known);
  try {
    for await (const chunk of source.chunks) {
      splitter.push(chunk);
      options.onProgress?.(source.bytesRead(), source.totalBytes);
      if (detector.gaveUp) break;
    }
    splitter.end();
  } catch (error) {
    return fail(describeFileError(error));
  } finally {
    source.close();
  }
  pass.undetectedLines = detector.seen;
  return ok({ ...pass, compressed: source.compressed });
}

const streamList = (streams: StreamChoice): string => {
  const all = [[streams.chosenName ?? '', streams.kept] as const, ...streams.others.entries()];
  return all.map(([name, count]) => `${name} (${count} request${count === 1 ? '' : 's'})`).join(', ');
};

/** Reads `path` (named `display` in messages) into `sink`. */
export async function readTraceFile(path: string, display: string, sink: RequestSink, options: ReadOptions = {}): Promise<Outcome<TraceFileReport>> {
  const named = (message: string): Outcome<never> => fail(`${display}: ${message}`);
  let result = await readPass(path, sink, options, 'D', undefined);
  if (!result.ok) return named(result.error);
  let pass = result.value;
  // Block-trace text without issued (D) events: its queued (Q) events are the requests.
  if (pass.format === 'block-trace' && pass.tally.requests === 0 && (pass.block?.otherKindRequests ?? 0) > 0) {
    result = await readPass(path, sink, options, 'Q', 'block-trace');
    if (!result.ok) return named(result.error);
    pass = result.value;
  }
  const { format, tally, streams } = pass;
  if (format === undefined) {
    return named(pass.undetectedLines === 0 ? 'no usable request: the file holds no lines' : `cannot tell the trace format from its first lines; expected ${FORMATS_ACCEPTED}`);
  }
  const kind = format === 'block-trace' ? 'device' : 'file';
  if (streams.wanted !== undefined && streams.kept === 0) {
    const present = streams.others.size > 0 ? `; it holds ${[...streams.others.keys()].join(', ')}` : '';
    return named(`no request of ${kind} "${streams.wanted}"${present}`);
  }
  if (streams.wanted === undefined && streams.others.size > 0) {
    return named(`the trace covers several ${kind}s: ${streamList(streams)}; choose one with --${kind}`);
  }
  if (tally.requests === 0) {
    const skipped = tally.skippedLines > 0 ? ` (${tally.skippedLines} line${tally.skippedLines === 1 ? '' : 's'} not understood, the first at line ${tally.firstSkippedLine})` : '';
    return named(`no usable request: no read, write or discard of any bytes${skipped}`);
  }
  return ok({
    path: display,
    format,
    requests: tally.requests,
    ignoredEvents: tally.ignoredEvents,
    skippedLines: tally.skippedLines,
    firstSkippedLine: tally.firstSkippedLine,
    ...(streams.chosenName !== undefined && format !== 'csv' ? { stream: streams.chosenName } : {}),
    ...(format === 'block-trace' ? { event: pass.block?.event ?? 'D' } : {}),
    compressed: pass.compressed,
  });
}
