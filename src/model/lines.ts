// Offsets to 1-based lines and columns (UTF-16 code units, as editors and SARIF count them). A line
// ends at LF, CRLF or a lone CR, as YAML 1.2 (section 5.4) and editors count line breaks.
import type { SourceRange } from '../core/results';

/** Pushes the start of every line that begins after a line break in text[from, to); returns where scanning stopped. */
function scanLineStarts(text: string, from: number, to: number, starts: number[]): number {
  let i = from;
  for (; i < to; i++) {
    const code = text.charCodeAt(i);
    if (code === 10) starts.push(i + 1);
    else if (code === 13) {
      if (text.charCodeAt(i + 1) === 10) i++;
      starts.push(i + 1);
    }
  }
  return i;
}

export class LineIndex {
  private readonly starts: number[];

  /** `starts` is for LineIndex.edited only: the line starts of `text`, already known. */
  constructor(readonly text: string, starts?: number[]) {
    if (starts) this.starts = starts;
    else {
      this.starts = [0];
      scanLineStarts(text, 0, text.length, this.starts);
    }
  }

  /**
   * The index of `text`, which is this index's text with text[start, oldEnd) replaced by
   * text[start, newEnd): lines before the edit are kept, the edited part is scanned again and the
   * lines after it move by `delta` (what an editor's keystroke costs, instead of the whole file).
   */
  edited(text: string, change: { start: number; oldEnd: number; newEnd: number; delta: number }): LineIndex {
    const old = this.starts;
    // Lines that start before the edit's first character are unchanged; the scan restarts one
    // character early so a CR before the edit sees what now follows it.
    const scanFrom = Math.max(0, change.start - 1);
    const starts = old.slice(0, lowerBound(old, scanFrom + 1));
    // One character past the edit as well: a CR at its end may now be followed by an LF.
    const resumed = scanLineStarts(text, scanFrom, Math.min(text.length, change.newEnd + 1), starts);
    // From here on the new text is the old text moved by delta, break for break.
    let next = lowerBound(old, resumed - change.delta + 1);
    for (; next < old.length; next++) starts.push((old[next] as number) + change.delta);
    return new LineIndex(text, starts);
  }

  /** 1-based line and column of an offset. */
  position(offset: number): { line: number; column: number } {
    const clamped = Math.max(0, Math.min(offset, this.text.length));
    let low = 0;
    let high = this.starts.length - 1;
    while (low < high) {
      const mid = (low + high + 1) >> 1;
      if ((this.starts[mid] as number) <= clamped) low = mid;
      else high = mid - 1;
    }
    return { line: low + 1, column: clamped - (this.starts[low] as number) + 1 };
  }

  lineStart(line: number): number {
    return this.starts[Math.max(0, Math.min(line - 1, this.starts.length - 1))] as number;
  }

  get lineCount(): number {
    return this.starts.length;
  }

  /** The text of a 1-based line without its line break. */
  lineText(line: number): string {
    const start = this.lineStart(line);
    const next = line < this.starts.length ? (this.starts[line] as number) : this.text.length;
    return this.text.slice(start, next).replace(/(\r\n|\r|\n)$/, '');
  }

  range(start: number, end: number): SourceRange {
    const from = this.position(start);
    const to = this.position(Math.max(start, end));
    return { offset: start, length: Math.max(0, end - start), line: from.line, column: from.column, endLine: to.line, endColumn: to.column };
  }
}

/** The first index of a sorted array whose value is at least `value`. */
function lowerBound(sorted: readonly number[], value: number): number {
  let low = 0;
  let high = sorted.length;
  while (low < high) {
    const mid = (low + high) >> 1;
    if ((sorted[mid] as number) < value) low = mid + 1;
    else high = mid;
  }
  return low;
}
