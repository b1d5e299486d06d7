// One name per concept, everywhere a user reads one: every command's help, every rule's description
// and the messages and fix titles it writes on the demo fleet, the editor's contributed titles and
// descriptions, and the prose strings of the extension, the sizing panel and the image viewer.
// Each concept below lists the other names it once had (or that other tools use); finding one fails
// with the place and the name to use instead.
import { strict as assert } from 'node:assert';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { COMMANDS, MAIN_USAGE, runCommand } from '../../src/cli/main';
import { RULES } from '../../src/rules';

const ROOT = path.resolve(__dirname, '../..');

interface Concept {
  name: string;
  /** Other names for the same concept. */
  others: RegExp;
}

const CONCEPTS: Concept[] = [
  { name: 'cache entry size (of the L2 cache)', others: /\bslices?\b|\bl2Slice\b|--slice\b|(?<!cache )\bentry size\b|\bentrySize\b/i },
  { name: 'combined cache (L2 + refcount)', others: /\btotal ?cache\b/i },
  { name: 'accepted, with its reason', others: /\bsuppress(ed|es|ion|ions)?\b|\bwaive[drs]?\b|\bwaivers?\b|\bignored findings?\b|\bexceptions?\b/i },
  { name: 'fix (one word; no "safe fix")', others: /\bsafe fix/i },
  { name: 'access patterns: random, sequential, mixed, zipf(S), "P% on Q%"', others: /\bhot ?spot\b|zipf:|\buniform access\b|\buniform\|/i },
  { name: 'intervals as the mapping file writes them (10m, 90s, 1h)', others: /\b\d+ s\b|\b\d+ seconds\b/ },
  { name: 'shares as "6.2 %"', others: /\d\.\d%/ },
  { name: 'allocation map cells', others: /\bregions? of\b/i },
  { name: 'lint options of our own', others: /--config\b|--quiet\b|--max-warnings\b/ },
];

/** The rule id `invalid-suppression` is a public contract and stays. */
const ALLOWED = [/invalid-suppression/g];

interface Label {
  where: string;
  text: string;
}

/** Quoted strings and template literals of a source file, with their line numbers; comments left out. */
function stringLiterals(file: string): Label[] {
  const text = fs.readFileSync(file, 'utf8');
  const labels: Label[] = [];
  const pattern = /\/\/[^\n]*|\/\*[\s\S]*?\*\/|'(?:[^'\\\n]|\\.)*'|"(?:[^"\\\n]|\\.)*"|`(?:[^`\\]|\\.)*`/g;
  for (const match of text.matchAll(pattern)) {
    const literal = match[0];
    if (literal.startsWith('//') || literal.startsWith('/*')) continue;
    // A template literal's `${...}` holds code, not words: read only its text.
    const body = literal.slice(1, -1).replace(/\$\{[^}]*\}/g, '…');
    // Prose only: identifiers, keys and ids have no spaces (and are not what a user reads).
    if (!/\s/.test(body) && !body.startsWith('--')) continue;
    const line = text.slice(0, match.index).split('\n').length;
    labels.push({ where: `${path.relative(ROOT, file)}:${line}`, text: body });
  }
  return labels;
}

function sourceFiles(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const full = path.join(dir, e.name);
    return e.isDirectory() ? sourceFiles(full) : e.name.endsWith('.ts') ? [full] : [];
  });
}

async function helpTexts(): Promise<Label[]> {
  const labels: Label[] = [{ where: 'cachewright --help', text: MAIN_USAGE }];
  for (const name of Object.keys(COMMANDS)) {
    let out = '';
    await runCommand([name, '--help'], { stdout: (t) => { out += t; }, stderr: (t) => { out += t; }, cwd: ROOT, stderrIsTTY: false });
    labels.push({ where: `cachewright ${name} --help`, text: out });
  }
  return labels;
}

interface LintJson {
  files: Array<{ path: string; findings: Array<{ rule: string; message: string; fix?: { title: string } }> }>;
}

async function ruleTexts(): Promise<Label[]> {
  const labels: Label[] = RULES.map((r) => ({ where: `rule ${r.id} description`, text: r.description }));
  let out = '';
  await runCommand(['lint', '--format', 'json'], { stdout: (t) => { out += t; }, stderr: () => undefined, cwd: path.join(ROOT, 'examples'), stderrIsTTY: false });
  for (const file of (JSON.parse(out) as LintJson).files) {
    for (const f of file.findings) {
      labels.push({ where: `${f.rule} on examples/${file.path}`, text: f.message });
      if (f.fix) labels.push({ where: `${f.rule} fix on examples/${file.path}`, text: f.fix.title });
    }
  }
  return labels;
}

function manifestTexts(): Label[] {
  const manifest = JSON.parse(fs.readFileSync(path.join(ROOT, 'package.json'), 'utf8')) as { description: string; contributes: unknown; capabilities: unknown };
  const labels: Label[] = [{ where: 'package.json description', text: manifest.description }];
  const walk = (value: unknown, where: string): void => {
    if (typeof value === 'string') labels.push({ where, text: value });
    else if (Array.isArray(value)) value.forEach((v, i) => walk(v, `${where}[${i}]`));
    else if (value && typeof value === 'object') for (const [k, v] of Object.entries(value)) walk(v, `${where}.${k}`);
  };
  walk(manifest.contributes, 'package.json contributes');
  walk(manifest.capabilities, 'package.json capabilities');
  return labels;
}

function uiTexts(): Label[] {
  const files = [
    ...sourceFiles(path.join(ROOT, 'webview')),
    ...sourceFiles(path.join(ROOT, 'src', 'extension')),
    path.join(ROOT, 'src', 'protocol', 'image-groups.ts'),
    path.join(ROOT, 'src', 'core', 'cautions.ts'),
    path.join(ROOT, 'src', 'core', 'profiles.ts'),
    path.join(ROOT, 'src', 'core', 'cachemodel', 'access.ts'),
  ];
  return files.flatMap(stringLiterals);
}

function offences(labels: Label[]): string[] {
  const found: string[] = [];
  for (const label of labels) {
    const text = ALLOWED.reduce((t, allowed) => t.replace(allowed, ''), label.text);
    for (const concept of CONCEPTS) {
      const hit = concept.others.exec(text);
      if (hit) found.push(`${label.where}: "${hit[0]}" — use the one name for ${concept.name}`);
    }
  }
  return found;
}

describe('one name per concept in everything a user reads', function () {
  this.timeout(60000);

  it('catches a second name (the check itself)', () => {
    assert.equal(offences([{ where: 'sample', text: 'the L2 slice of a total cache, suppressed, every 600 s at 40.0%, zipf:0.8' }]).length, 6);
    assert.deepEqual(offences([{ where: 'sample', text: 'invalid-suppression: a cache entry size of 4 KiB, combined cache, accepted, every 10m at 40 %' }]), []);
  });

  it('command help', async () => {
    assert.deepEqual(offences(await helpTexts()), []);
  });

  it('rule descriptions, and the messages and fix titles on the demo fleet', async () => {
    const labels = await ruleTexts();
    assert.ok(labels.length > RULES.length, 'the demo fleet has findings');
    assert.deepEqual(offences(labels), []);
  });

  it('the editor\'s contributed titles and descriptions', () => {
    assert.deepEqual(offences(manifestTexts()), []);
  });

  it('the prose of the extension, the sizing panel and the image viewer', () => {
    const labels = uiTexts();
    assert.ok(labels.length > 100, `${labels.length} strings read`);
    assert.deepEqual(offences(labels), []);
  });
});
