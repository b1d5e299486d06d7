// Byte-level helpers for the trace readers: a trace of tens of millions of lines is read without
// making a string per line. A line is a range [start, end) of a byte buffer.
import { atIndex } from '../core/indexed';

const SPACE = 0x20;
const TAB = 0x09;
const CR = 0x0d;
const ZERO = 0x30;
const NINE = 0x39;

/** Where the fields of one line start and end: starts[i], ends[i] for i < count. */
export class Fields {
  readonly starts = new Int32Array(32);
  readonly ends = new Int32Array(32);
  count = 0;

  /** Splits [start, end) at runs of spaces and tabs (and a trailing CR); at most 32 fields are kept. */
  splitWhitespace(buf: Uint8Array, start: number, end: number): number {
    let count = 0;
    let i = start;
    while (i < end) {
      // Each byte is read only while i < end: the range may end at the buffer's end.
      while (i < end && isBlank(atIndex(buf, i))) i++;
      if (i >= end) break;
      const fieldStart = i;
      while (i < end && !isBlank(atIndex(buf, i))) i++;
      if (count < 32) {
        this.starts[count] = fieldStart;
        this.ends[count] = i;
      }
      count++;
    }
    this.count = count;
    return count;
  }

  /** Splits [start, end) at `separator`, trimming spaces, tabs and CR around each field. */
  splitAt(buf: Uint8Array, start: number, end: number, separator: number): number {
    let count = 0;
    let fieldStart = start;
    for (let i = start; i <= end; i++) {
      if (i < end && buf[i] !== separator) continue;
      let s = fieldStart;
      let e = i;
      while (s < e && isBlank(atIndex(buf, s))) s++;
      while (e > s && isBlank(atIndex(buf, e - 1))) e--;
      if (count < 32) {
        this.starts[count] = s;
        this.ends[count] = e;
      }
      count++;
      fieldStart = i + 1;
    }
    this.count = count;
    return count;
  }

  start(i: number): number {
    return atIndex(this.starts, i);
  }

  end(i: number): number {
    return atIndex(this.ends, i);
  }
}

const isBlank = (c: number): boolean => c === SPACE || c === TAB || c === CR;

/** True when [start, end) holds only spaces, tabs and CR. */
export function isBlankRange(buf: Uint8Array, start: number, end: number): boolean {
  for (let i = start; i < end; i++) if (!isBlank(atIndex(buf, i))) return false;
  return true;
}

/**
 * Reads an unsigned decimal integer from [start, end); -1 when the range is empty, holds anything but
 * digits, or is too long to be exact as a double (more than 15 digits).
 */
export function readUnsigned(buf: Uint8Array, start: number, end: number): number {
  if (end <= start || end - start > 15) return -1;
  let value = 0;
  for (let i = start; i < end; i++) {
    const c = atIndex(buf, i);
    if (c < ZERO || c > NINE) return -1;
    value = value * 10 + (c - ZERO);
  }
  return value;
}

/** True when [start, end) is digits with at most one '.' inside (a time stamp such as 0.000123). */
export function isDecimal(buf: Uint8Array, start: number, end: number): boolean {
  if (end <= start) return false;
  let dots = 0;
  for (let i = start; i < end; i++) {
    const c = atIndex(buf, i);
    if (c === 0x2e) dots++;
    else if (c < ZERO || c > NINE) return false;
  }
  return dots <= 1 && buf[start] !== 0x2e && buf[end - 1] !== 0x2e;
}

/** ASCII bytes of a keyword, for comparisons without decoding. */
export const ascii = (text: string): Uint8Array => Uint8Array.from(text, (c) => c.charCodeAt(0));

/** True when [start, end) equals `word`, ignoring ASCII case when `caseless`. */
export function equalsWord(buf: Uint8Array, start: number, end: number, word: Uint8Array, caseless = false): boolean {
  if (end - start !== word.length) return false;
  for (let i = 0; i < word.length; i++) {
    let c = atIndex(buf, start + i);
    if (caseless && c >= 0x41 && c <= 0x5a) c += 0x20;
    if (c !== word[i]) return false;
  }
  return true;
}

/** True when two byte ranges hold the same bytes. */
export function sameBytes(a: Uint8Array, aStart: number, aEnd: number, b: Uint8Array): boolean {
  if (aEnd - aStart !== b.length) return false;
  for (let i = 0; i < b.length; i++) if (a[aStart + i] !== b[i]) return false;
  return true;
}

const utf8 = new TextDecoder('utf-8');
/** The text of a range, for names and messages (not on the per-line path). */
export const textOf = (buf: Uint8Array, start: number, end: number): string => utf8.decode(buf.subarray(start, end));
