// Tells a trace's format from its first lines: an I/O log announces itself in its first line; a
// block-trace text line has a shape of its own; a CSV line is two or three comma-separated fields
// starting with two numbers (after an optional header line).

import { BLOCK_TRACE_EVENT } from './formats/block-trace';
import { IO_LOG_HEADERS } from './formats/io-log';
import type { TraceFormat } from './formats/tally';

/** Lines with content looked at before giving up. */
export const DETECTION_LINES = 64;

const CSV_REQUEST = /^\s*\d+\s*,\s*\d+\s*(,\s*[A-Za-z]*\s*)?$/;
/** A header such as "offset,length,op": two or three names separated by commas. */
const CSV_HEADER = /^\s*[A-Za-z_][\w ]*(,\s*[A-Za-z_][\w ]*){1,2}\s*$/;

/**
 * The format a line shows, if it shows one. `index` counts the lines with content before it: the I/O
 * log header counts only as the first.
 */
export function formatOfLine(line: string, index: number): TraceFormat | undefined {
  const text = line.replace(/\r$/, '');
  if (index === 0) {
    const trimmed = text.trim();
    if (trimmed === IO_LOG_HEADERS[2]) return 'io-log-v2';
    if (trimmed === IO_LOG_HEADERS[3]) return 'io-log-v3';
    if (CSV_HEADER.test(text)) return 'csv';
  }
  if (BLOCK_TRACE_EVENT.test(text)) return 'block-trace';
  if (CSV_REQUEST.test(text)) return 'csv';
  return undefined;
}

export const FORMAT_NAMES: Record<TraceFormat, string> = {
  csv: 'CSV (offset,length[,op])',
  'io-log-v2': 'I/O log version 2',
  'io-log-v3': 'I/O log version 3',
  'block-trace': 'block-layer trace text',
};

export const FORMATS_ACCEPTED =
  'CSV lines "offset,length[,op]" in bytes, an I/O log whose first line is "fio version 2 iolog" or "fio version 3 iolog", or block-layer trace text (the dumper\'s default output)';
