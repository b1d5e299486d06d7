// Every command example in README.md and docs/ runs here and its printed output is compared, so the
// documentation cannot drift from the tool. An example is a fenced `console` block: `$ cachewright
// ARGS` lines, each followed by exactly what the command prints (stdout, then stderr), and
// optionally `[exit N]` when it does not exit 0. They run in examples/, the invented demo fleet.
// Any other fenced line that starts with `$ ` is an error: every example must be checked.
import { strict as assert } from 'node:assert';
import { spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { runCommand } from '../../src/cli/main';

const ROOT = path.resolve(__dirname, '../..');
const EXAMPLES = path.join(ROOT, 'examples');

function docFiles(): string[] {
  const docs = (dir: string): string[] => fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const full = path.join(dir, e.name);
    return e.isDirectory() ? docs(full) : e.name.endsWith('.md') ? [full] : [];
  });
  return [path.join(ROOT, 'README.md'), ...docs(path.join(ROOT, 'docs'))];
}

interface Example {
  file: string;
  line: number;
  argv: string[];
  expected: string;
  exit: number;
}

/** Splits a command line the way a POSIX shell splits plain words and single or double quotes. */
export function shellWords(line: string): string[] {
  const words: string[] = [];
  let word: string | null = null;
  let quote: '"' | "'" | null = null;
  for (const ch of line) {
    if (quote) {
      if (ch === quote) quote = null;
      else word = (word ?? '') + ch;
    } else if (ch === '"' || ch === "'") {
      quote = ch;
      word = word ?? '';
    } else if (/\s/.test(ch)) {
      if (word !== null) words.push(word);
      word = null;
    } else word = (word ?? '') + ch;
  }
  if (quote) throw new Error(`unclosed quote in: ${line}`);
  if (word !== null) words.push(word);
  return words;
}

interface Fence {
  info: string;
  line: number;
  body: string[];
}

function fences(text: string): Fence[] {
  const lines = text.split('\n');
  const out: Fence[] = [];
  for (let i = 0; i < lines.length; i++) {
    const open = /^```(\S*)\s*$/.exec(lines[i] ?? '');
    if (!open) continue;
    const start = i;
    const body: string[] = [];
    for (i++; i < lines.length && !/^```\s*$/.test(lines[i] ?? ''); i++) body.push(lines[i] ?? '');
    out.push({ info: open[1] ?? '', line: start + 1, body });
  }
  return out;
}

function examplesOf(file: string): { examples: Example[]; unchecked: string[] } {
  const examples: Example[] = [];
  const unchecked: string[] = [];
  for (const fence of fences(fs.readFileSync(file, 'utf8'))) {
    if (fence.info !== 'console') {
      fence.body.forEach((l, i) => {
        if (l.startsWith('$ ')) unchecked.push(`${path.relative(ROOT, file)}:${fence.line + 1 + i}: ${l}`);
      });
      continue;
    }
    let current: Example | undefined;
    fence.body.forEach((l, i) => {
      if (l.startsWith('$ ')) {
        current = { file: path.relative(ROOT, file), line: fence.line + 1 + i, argv: shellWords(l.slice(2)), expected: '', exit: 0 };
        examples.push(current);
        return;
      }
      if (!current) return;
      const exit = /^\[exit (\d+)\]$/.exec(l);
      if (exit) current.exit = Number(exit[1]);
      else current.expected += `${l}\n`;
    });
  }
  return { examples, unchecked };
}

async function run(argv: string[]): Promise<{ code: number; out: string }> {
  let stdout = '';
  let stderr = '';
  const code = await runCommand(argv, { stdout: (t) => { stdout += t; }, stderr: (t) => { stderr += t; }, cwd: EXAMPLES, stderrIsTTY: false });
  return { code, out: stdout + stderr };
}

/** Trailing spaces are invisible in a document; blank lines at the end of a block too. */
const normal = (text: string): string => text.split('\n').map((l) => l.trimEnd()).join('\n').replace(/\n+$/, '');

describe('documentation examples run as written', function () {
  this.timeout(60000);
  // The examples show the demo as `npm run demo` leaves it: with the ledger's I/O trace written
  // (seeded, not kept in git), so whether a developer ran the demo first changes nothing.
  before(() => {
    const traces = spawnSync(process.execPath, [path.join(ROOT, 'scripts', 'demo-traces.mjs')], { cwd: ROOT, encoding: 'utf8' });
    assert.equal(traces.status, 0, traces.stderr);
  });
  const files = docFiles();
  const all = files.map(examplesOf);

  it('every fenced line starting with "$ " is in a checked console block', () => {
    assert.deepEqual(all.flatMap((a) => a.unchecked), []);
  });

  it('the README and the CLI guide have examples', () => {
    const counted = (name: string) => all.flatMap((a) => a.examples).filter((e) => e.file === name).length;
    assert.ok(counted('README.md') >= 2, 'README.md');
    assert.ok(counted(path.join('docs', 'cli.md')) >= 3, 'docs/cli.md');
  });

  for (const { examples } of all) {
    for (const example of examples) {
      it(`${example.file}:${example.line}: ${example.argv.join(' ')}`, async () => {
        assert.equal(example.argv[0], 'cachewright', 'examples run the cachewright command');
        const { code, out } = await run(example.argv.slice(1));
        assert.equal(normal(out), normal(example.expected));
        assert.equal(code, example.exit, 'exit status');
      });
    }
  }
});
