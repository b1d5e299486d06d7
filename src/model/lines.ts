// Offsets to 1-based lines and columns (UTF-16 code units, as editors and SARIF count them). A line
// ends at LF, CRLF or a lone CR, as YAML 1.2 (section 5.4) and editors count line breaks.
import type { SourceRange } from '../core/results';
import { atIndex } from '../core/indexed';

export class LineIndex {
  private readonly starts: number[] = [0];

  constructor(readonly text: string) {
    for (let i = 0; i < text.length; i++) {
      const code = text.charCodeAt(i);
      if (code === 10) this.starts.push(i + 1);
      else if (code === 13) {
        if (text.charCodeAt(i + 1) === 10) i++;
        this.starts.push(i + 1);
      }
    }
  }

  /** 1-based line and column of an offset. */
  position(offset: number): { line: number; column: number } {
    const clamped = Math.max(0, Math.min(offset, this.text.length));
    let low = 0;
    let high = this.starts.length - 1;
    while (low < high) {
      const mid = (low + high + 1) >> 1;
      if ((atIndex(this.starts, mid)) <= clamped) low = mid;
      else high = mid - 1;
    }
    return { line: low + 1, column: clamped - (atIndex(this.starts, low)) + 1 };
  }

  lineStart(line: number): number {
    return atIndex(this.starts, Math.max(0, Math.min(line - 1, this.starts.length - 1)));
  }

  get lineCount(): number {
    return this.starts.length;
  }

  /** The text of a 1-based line without its line break. */
  lineText(line: number): string {
    const start = this.lineStart(line);
    const next = line < this.starts.length ? (atIndex(this.starts, line)) : this.text.length;
    return this.text.slice(start, next).replace(/(\r\n|\r|\n)$/, '');
  }

  range(start: number, end: number): SourceRange {
    const from = this.position(start);
    const to = this.position(Math.max(start, end));
    return { offset: start, length: Math.max(0, end - start), line: from.line, column: from.column, endLine: to.line, endColumn: to.column };
  }
}
