// `cachewright lint --fix` on real files in throwaway folders: it changes the bytes it means to and no
// others (YAML and JSON, LF and CRLF, with and without a UTF-8 byte order mark), lands fixes that
// touch the same map over several passes, writes atomically, and leaves alone what it must.
// Expected values follow docs/sources.md [CACHE]: full coverage = ceil(V / cluster) * 8 bytes, rounded up
// to whole cache entries; 600 s is the idle cleanup interval the cleanup rule proposes.
import { strict as assert } from 'node:assert';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { CACHE, COMMON, CONTRACT, RFC8259 } from '../helpers/sources';
import { CLI, copyWorkspace, lintIn, lintProcess, makeWorkspace, removeWorkspace, STACK_FRAME, type LintJson, type Run } from '../fixtures/lint/run';

/** The conventional unprivileged user (uid and gid 65534). */
const NOBODY = { uid: 65534, gid: 65534 };

const json = (run: Run): LintJson => JSON.parse(run.stdout) as LintJson;

/** A mapping for the legacy driver profile, where an unset cleanup interval means none runs. */
const LEGACY_MAPPING = `version: 1
include: ["*.yaml", "*.json"]
machines: "$.guests[*]"
disks: "$.drives[*]"
fields:
  machine: { name: "$.id" }
  disk: { name: "$.id", size: "$.size", l2Cache: "$.cache.l2", cleanupInterval: "$.cache.clean" }
assume: { driver: legacy }
`;

// Two disks each: a block map (YAML) or a one-line object (JSON) whose L2 value is replaced and
// which gains a cleanup key right after it, and a flow map (YAML) or multi-line object (JSON).
const YAML_BEFORE = `guests:
  - id: kite-01
    drives:
      - id: data   # the ledger
        size: 1T
        cache:
          l2: 8M   # too small
      - id: logs
        size: 100G
        cache: { l2: 2M }
`;
// 1 TiB / 64 KiB * 8 B = 128 MiB; 100 GiB / 64 KiB * 8 B = 12.5 MiB (= 200 whole 64 KiB entries)
const YAML_AFTER = `guests:
  - id: kite-01
    drives:
      - id: data   # the ledger
        size: 1T
        cache:
          l2: 128M   # too small
          clean: 600
      - id: logs
        size: 100G
        cache: { l2: 12800K, clean: 600 }
`;
const JSON_BEFORE = `{
  "guests": [
    {
      "id": "kite-02",
      "drives": [
        { "id": "data", "size": "1T", "cache": { "l2": "8M" } },
        {
          "id": "logs",
          "size": "100G",
          "cache": {
            "l2": "2M"
          }
        }
      ]
    }
  ]
}
`;
const JSON_AFTER = `{
  "guests": [
    {
      "id": "kite-02",
      "drives": [
        { "id": "data", "size": "1T", "cache": { "l2": "128M", "clean": 600 } },
        {
          "id": "logs",
          "size": "100G",
          "cache": {
            "l2": "12800K",
            "clean": 600
          }
        }
      ]
    }
  ]
}
`;

const BOM = '\ufeff';
const VARIANTS = [
  { name: 'LF', eol: '\n', bom: '' },
  { name: 'CRLF', eol: '\r\n', bom: '' },
  { name: 'LF with a UTF-8 BOM', eol: '\n', bom: BOM },
  { name: 'CRLF with a UTF-8 BOM', eol: '\r\n', bom: BOM },
];
const shape = (text: string, eol: string, bom: string) => bom + text.replace(/\n/g, eol);

/**
 * Every line of the original survives, in order and byte for byte, except lines whose change is
 * allowed; lines that are new must be allowed insertions.
 */
function assertLinesKept(original: string, fixed: string, changed: (before: string, after: string) => boolean, inserted: (line: string) => boolean): void {
  const before = original.split('\n');
  const after = fixed.split('\n');
  let i = 0;
  for (let j = 0; j < after.length; j++) {
    const line = after[j] as string;
    if (i < before.length && line === before[i]) i++;
    else if (i < before.length && changed(before[i] as string, line)) i++;
    else assert.ok(inserted(line), `line ${j + 1} of the fixed file is neither kept nor an allowed insertion: ${JSON.stringify(line)}`);
  }
  assert.equal(i, before.length, 'every original line is still there');
}

/** The fixed text is the original with exactly these replacements (original offsets), nothing else. */
function assertOnlyEdited(original: string, fixed: string, edits: readonly { offset: number; length: number; text: string }[]): void {
  const sorted = [...edits].sort((a, b) => a.offset - b.offset);
  let from = 0;
  let at = 0;
  for (const edit of sorted) {
    const kept = original.slice(from, edit.offset);
    assert.equal(fixed.slice(at, at + kept.length), kept, `bytes before offset ${edit.offset} changed`);
    at += kept.length;
    assert.equal(fixed.slice(at, at + edit.text.length), edit.text, `edit at ${edit.offset}`);
    at += edit.text.length;
    from = edit.offset + edit.length;
  }
  assert.equal(fixed.slice(at), original.slice(from), 'bytes after the last edit changed');
}

describe('cachewright lint --fix', () => {
  for (const variant of VARIANTS) {
    it(`${CACHE} YAML and JSON, ${variant.name}: the fixed bytes are exactly the expected ones, in several passes`, async () => {
      const yamlBefore = shape(YAML_BEFORE, variant.eol, variant.bom);
      const jsonBefore = shape(JSON_BEFORE, variant.eol, variant.bom);
      const dir = makeWorkspace({ 'cachewright.yaml': LEGACY_MAPPING, 'block.yaml': yamlBefore, 'doc.json': jsonBefore });
      try {
        const run = await lintIn(dir, ['--fix', '--format', 'json']);
        assert.equal(run.code, 0, run.stdout + run.stderr);
        assert.equal(run.stderr, '');
        const yamlAfter = fs.readFileSync(path.join(dir, 'block.yaml'));
        const jsonAfter = fs.readFileSync(path.join(dir, 'doc.json'));
        assert.ok(yamlAfter.equals(Buffer.from(shape(YAML_AFTER, variant.eol, variant.bom), 'utf8')), `block.yaml:\n${JSON.stringify(yamlAfter.toString('utf8'))}`);
        assert.ok(jsonAfter.equals(Buffer.from(shape(JSON_AFTER, variant.eol, variant.bom), 'utf8')), `doc.json:\n${JSON.stringify(jsonAfter.toString('utf8'))}`);
        // the L2 value and the cleanup key of one map cannot go in one pass: both landed
        assert.equal(json(run).summary.fixed, 8);
        assert.deepEqual(json(run).files.map((f) => f.fixed), [2 * 2, 2 * 2]);
      } finally {
        removeWorkspace(dir);
      }
    });

    it(`${COMMON} ${variant.name}: outside the fixed values and the inserted lines, every byte is the original's`, async () => {
      const yamlBefore = shape(YAML_BEFORE, variant.eol, variant.bom);
      const jsonBefore = shape(JSON_BEFORE, variant.eol, variant.bom);
      const dir = makeWorkspace({ 'cachewright.yaml': LEGACY_MAPPING, 'block.yaml': yamlBefore, 'doc.json': jsonBefore });
      try {
        await lintIn(dir, ['--fix']);
        const valueChanged = (before: string, after: string) => before.replace(/"?\b\d+M"?/, '') === after.replace(/"?\b\d+[MK]"?/, '').replace(/,? "clean": 600/, '').replace(/, clean: 600/, '');
        const cleanLine = (line: string) => /^ +"?clean"?: 600\r?$/.test(line);
        const yamlAfter = fs.readFileSync(path.join(dir, 'block.yaml'), 'utf8');
        const jsonAfter = fs.readFileSync(path.join(dir, 'doc.json'), 'utf8');
        assert.equal(yamlAfter.startsWith(BOM), variant.bom === BOM);
        assertLinesKept(yamlBefore, yamlAfter, valueChanged, cleanLine);
        // JSON: a value on its own line gains the comma that separates it from the new member
        assertLinesKept(jsonBefore, jsonAfter, (b, a) => valueChanged(b, a) || b.replace(/"2M"/, '"12800K",') === a, cleanLine);
        assert.equal(yamlAfter.split('\r\n').length, variant.eol === '\r\n' ? yamlAfter.split('\n').length : 1, 'no mixed line endings');
        assert.equal(jsonAfter.split('\r\n').length, variant.eol === '\r\n' ? jsonAfter.split('\n').length : 1, 'no mixed line endings');
      } finally {
        removeWorkspace(dir);
      }
    });
  }

  it(`${CONTRACT} a one-pass fix changes exactly the ranges its edits name (offsets from the JSON output)`, async () => {
    const dir = copyWorkspace();
    try {
      const file = path.join(dir, 'hosts', 'undersized.yaml');
      const original = fs.readFileSync(file, 'utf8');
      const before = json(await lintIn(dir, ['--format', 'json', 'hosts/undersized.yaml']));
      const edits = before.files[0]?.findings.flatMap((f) => f.fix?.edits ?? []) ?? [];
      assert.equal(edits.length, 1);
      await lintIn(dir, ['--fix', 'hosts/undersized.yaml']);
      const fixed = fs.readFileSync(file, 'utf8');
      assertOnlyEdited(original, fixed, edits);
      assert.match(fixed, /l2: 128M {3}# a comment the fix must keep\n/);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} re-linting after --fix finds nothing for what was fixed; the --fix output already shows that`, async () => {
    const dir = makeWorkspace({ 'cachewright.yaml': LEGACY_MAPPING, 'block.yaml': YAML_BEFORE, 'doc.json': JSON_BEFORE });
    try {
      const before = json(await lintIn(dir, ['--format', 'json']));
      const fixedRules = new Set(before.files.flatMap((f) => f.findings.filter((x) => x.fix).map((x) => x.rule)));
      assert.deepEqual([...fixedRules].sort(), ['cleanup-interval-missing', 'l2-cache-undersized']);
      const fixRun = json(await lintIn(dir, ['--fix', '--format', 'json']));
      const again = json(await lintIn(dir, ['--format', 'json']));
      for (const doc of [fixRun, again]) {
        for (const file of doc.files) for (const finding of file.findings) assert.ok(!fixedRules.has(finding.rule), `${file.path}: ${finding.rule} ${finding.message}`);
      }
      assert.deepEqual(fixRun.files.map((f) => f.findings), again.files.map((f) => f.findings));
      // a second --fix has nothing left to do
      const second = json(await lintIn(dir, ['--fix', '--format', 'json']));
      assert.equal(second.summary.fixed, 0);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${COMMON} the text output after --fix lists what remains and counts the fixes applied`, async () => {
    const dir = copyWorkspace();
    try {
      const run = await lintIn(dir, ['--fix']);
      assert.equal(run.code, 1, 'the conflict has no fix and remains');
      assert.doesNotMatch(run.stdout, /undersized\.yaml.*l2-cache-undersized/);
      assert.match(run.stdout, /conflict\.json:7:\d+ +error +cache-options-conflict/);
      assert.match(run.stdout, /; --fix settled 2;/);
      // docs/sources.md "Cautions to show users": settings apply on reopen, host memory, change control
      assert.match(run.stdout, /restart the VM or reopen the disk/);
      assert.match(run.stdout, /host memory/);
      assert.match(run.stdout, /change control/);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} atomic write: the file is replaced by a rename, its mode kept, no temporary file left`, async () => {
    const dir = copyWorkspace();
    try {
      const file = path.join(dir, 'hosts', 'undersized.yaml');
      fs.chmodSync(file, 0o640);
      const inodeBefore = fs.statSync(file).ino;
      const listing = fs.readdirSync(path.join(dir, 'hosts')).sort();
      await lintIn(dir, ['--fix']);
      const after = fs.statSync(file);
      assert.notEqual(after.ino, inodeBefore, 'a new file took the old one\'s place');
      assert.equal(after.mode & 0o777, 0o640);
      assert.deepEqual(fs.readdirSync(path.join(dir, 'hosts')).sort(), listing);
      assert.deepEqual(fs.readdirSync(dir).sort(), ['cachewright.yaml', 'hosts', 'notes.yaml']);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${COMMON} a symbolic link stays a link; the file it points to is fixed`, async () => {
    const dir = makeWorkspace({ 'cachewright.yaml': LEGACY_MAPPING, 'real/block.txt': YAML_BEFORE });
    try {
      fs.symlinkSync(path.join('real', 'block.txt'), path.join(dir, 'block.yaml'));
      await lintIn(dir, ['--fix']);
      assert.ok(fs.lstatSync(path.join(dir, 'block.yaml')).isSymbolicLink());
      assert.equal(fs.readFileSync(path.join(dir, 'real', 'block.txt'), 'utf8'), YAML_AFTER);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} files that do not parse, have no fixes, or only accepted ones are not touched`, async () => {
    const dir = copyWorkspace();
    try {
      fs.writeFileSync(path.join(dir, 'hosts', 'broken.yaml'), 'guests:\n  - id: x\n    drives: [ { size: 1T, cache: { l2: 8M } }\n');
      fs.writeFileSync(path.join(dir, 'hosts', 'broken.json'), '{ "guests": [ { "drives": [ { "size": "1T", "cache": { "l2": "8M" } } ] } ] ');
      const untouched = ['broken.yaml', 'broken.json', 'clean.yaml', 'conflict.json', 'accepted.yaml'].map((name) => {
        const file = path.join(dir, 'hosts', name);
        return { name, file, bytes: fs.readFileSync(file), ino: fs.statSync(file).ino, mtime: fs.statSync(file).mtimeMs };
      });
      const run = await lintIn(dir, ['--fix', '--format', 'json']);
      assert.equal(run.code, 1);
      for (const entry of untouched) {
        const stat = fs.statSync(entry.file);
        assert.ok(fs.readFileSync(entry.file).equals(entry.bytes), `${entry.name} changed`);
        assert.equal(stat.ino, entry.ino, `${entry.name} was rewritten`);
        assert.equal(stat.mtimeMs, entry.mtime, `${entry.name} was rewritten`);
      }
      const doc = json(run);
      const broken = doc.files.filter((f) => f.path.startsWith('hosts/broken'));
      assert.deepEqual(broken.map((f) => [f.path, f.findings[0]?.rule, f.fixed]), [['hosts/broken.json', 'parse-error', 0], ['hosts/broken.yaml', 'parse-error', 0]]);
      // the accepted finding in accepted.yaml is still there, unfixed
      const accepted = doc.files.find((f) => f.path === 'hosts/accepted.yaml');
      assert.ok(accepted?.findings.some((f) => f.rule === 'l2-cache-undersized' && f.accepted));
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${RFC8259} a file that is not valid UTF-8 is left unchanged, with a note`, async () => {
    const bytes = Buffer.concat([Buffer.from('# caf'), Buffer.from([0xe9]), Buffer.from('\n'), Buffer.from(YAML_BEFORE)]);
    const dir = makeWorkspace({ 'cachewright.yaml': LEGACY_MAPPING, 'latin1.yaml': bytes });
    try {
      const run = await lintIn(dir, ['--fix']);
      assert.ok(fs.readFileSync(path.join(dir, 'latin1.yaml')).equals(bytes));
      assert.match(run.stderr, /^latin1\.yaml: left unchanged by --fix: the file is not valid UTF-8/m);
      assert.doesNotMatch(run.stderr, STACK_FRAME);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} a file that cannot be written: exit 2 naming it, the original untouched`, async () => {
    const dir = makeWorkspace({ 'cachewright.yaml': LEGACY_MAPPING, 'ro/block.yaml': YAML_BEFORE });
    try {
      fs.chmodSync(dir, 0o755);
      fs.chmodSync(path.join(dir, 'ro'), 0o555);
      // root writes into read-only folders: run the built CLI as an unprivileged user instead, from
      // a copy that user can read wherever the repository lives
      const root = process.getuid?.() === 0;
      let run: Run;
      if (root) {
        const cli = path.join(dir, 'cli.js');
        fs.copyFileSync(CLI, cli);
        run = await lintProcess(dir, ['--fix', 'ro/block.yaml'], { as: NOBODY, cli });
      } else {
        run = await lintIn(dir, ['--fix', 'ro/block.yaml']);
      }
      assert.equal(run.code, 2, run.stderr);
      assert.match(run.stderr, /^ro\/block\.yaml: cannot write the fixes: permission denied$/m);
      assert.doesNotMatch(run.stderr, STACK_FRAME);
      assert.equal(fs.readFileSync(path.join(dir, 'ro', 'block.yaml'), 'utf8'), YAML_BEFORE);
      assert.deepEqual(fs.readdirSync(path.join(dir, 'ro')), ['block.yaml']);
    } finally {
      fs.chmodSync(path.join(dir, 'ro'), 0o755);
      removeWorkspace(dir);
    }
  });
});
