// Finds where a JSON text (RFC 8259) first goes wrong. JSON.parse only says "is not valid JSON" for
// many errors on this Node, with no position, and the yaml reader accepts things JSON does not
// (trailing commas, comments), so JSON files get this exact check first.
import { atIndex } from '../core/indexed';

export interface JsonSyntaxError {
  offset: number;
  message: string;
}

/** What the scanner throws: a syntax error with its offset, told apart from any other error. */
class JsonSyntaxFailure extends Error {
  constructor(readonly offset: number, message: string) {
    super(message);
  }
}

class Scanner {
  i = 0;
  constructor(private readonly text: string) {}

  fail(message: string, offset = this.i): never {
    throw new JsonSyntaxFailure(offset, message);
  }

  space(): void {
    while (this.i < this.text.length && ' \t\n\r'.includes(atIndex(this.text, this.i))) this.i++;
  }

  describe(): string {
    return this.i >= this.text.length ? 'the end of the text' : `"${this.text[this.i]}"`;
  }

  value(depth: number): void {
    if (depth > 512) this.fail('nesting is too deep');
    this.space();
    const c = this.text[this.i];
    if (c === '{') return this.object(depth);
    if (c === '[') return this.array(depth);
    if (c === '"') return this.string();
    if (c === '-' || (c !== undefined && c >= '0' && c <= '9')) return this.number();
    for (const word of ['true', 'false', 'null']) {
      if (this.text.startsWith(word, this.i)) {
        this.i += word.length;
        return;
      }
    }
    this.fail(`expected a value, found ${this.describe()}`);
  }

  object(depth: number): void {
    this.i++;
    this.space();
    if (this.text[this.i] === '}') return void this.i++;
    for (;;) {
      this.space();
      if (this.text[this.i] !== '"') this.fail(`expected a key in double quotes, found ${this.describe()}`);
      this.string();
      this.space();
      if (this.text[this.i] !== ':') this.fail(`expected ":" after the key, found ${this.describe()}`);
      this.i++;
      this.value(depth + 1);
      if (!this.another('}')) return;
    }
  }

  array(depth: number): void {
    this.i++;
    this.space();
    if (this.text[this.i] === ']') return void this.i++;
    for (;;) {
      this.value(depth + 1);
      if (!this.another(']')) return;
    }
  }

  /** After a member or element: past a comma, true (another must follow); past the closing bracket, false. */
  another(close: '}' | ']'): boolean {
    this.space();
    if (this.text[this.i] === ',') {
      this.i++;
      this.space();
      if (this.text[this.i] === close) this.fail(`a trailing comma is not allowed before "${close}"`);
      return true;
    }
    if (this.text[this.i] === close) {
      this.i++;
      return false;
    }
    this.fail(`expected "," or "${close}", found ${this.describe()}`);
  }

  string(): void {
    const start = this.i++;
    while (this.i < this.text.length) {
      const c = this.text.charCodeAt(this.i);
      if (c === 0x22) return void this.i++;
      if (c < 0x20) this.fail('a control character must be escaped inside a string');
      if (c === 0x5c) {
        const e = this.text[this.i + 1];
        if (e === 'u') {
          if (!/^[0-9a-fA-F]{4}$/.test(this.text.slice(this.i + 2, this.i + 6))) this.fail('"\\u" must be followed by four hex digits');
          this.i += 6;
          continue;
        }
        if (e === undefined || !'"\\/bfnrt'.includes(e)) this.fail(`"\\${e ?? ''}" is not a JSON escape`);
        this.i += 2;
        continue;
      }
      this.i++;
    }
    this.fail('the string is not closed', start);
  }

  number(): void {
    const match = /^-?(0|[1-9]\d*)(\.\d+)?([eE][+-]?\d+)?/.exec(this.text.slice(this.i, this.i + 400));
    if (!match || match[0] === '-') this.fail('not a valid JSON number');
    this.i += match[0].length;
  }

  document(): void {
    if (this.text.charCodeAt(0) === 0xfeff) this.i = 1;
    this.value(0);
    this.space();
    if (this.i < this.text.length) this.fail(`unexpected ${this.describe()} after the JSON value`);
  }
}

export function findJsonSyntaxError(text: string): JsonSyntaxError | undefined {
  try {
    new Scanner(text).document();
    return undefined;
  } catch (error) {
    if (error instanceof JsonSyntaxFailure) return { offset: error.offset, message: error.message };
    return { offset: 0, message: String(error) };
  }
}
