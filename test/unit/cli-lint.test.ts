// `cachewright lint` run in process through runCommand, on the fixture workspace under
// test/fixtures/lint: exit codes, text and JSON output, file selection, mapping discovery and the
// errors a user sees. Expected numbers come from docs/sources.md's formulas and check table, not from the
// engine.
import { strict as assert } from 'node:assert';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { CACHE, COMMON, CONTRACT } from '../helpers/sources';
import { BROKEN_MAPPING, lintIn, makeWorkspace, removeWorkspace, STACK_FRAME, WORKSPACE, type LintJson, type Run } from '../fixtures/lint/run';

const MiB = 1024 * 1024;
const TiB = 1024 * 1024 * MiB;

function assertNoStack(run: Run): void {
  assert.doesNotMatch(run.stderr, STACK_FRAME, `stderr shows a stack trace:\n${run.stderr}`);
  assert.doesNotMatch(run.stdout, STACK_FRAME, `stdout shows a stack trace:\n${run.stdout}`);
}

const json = (run: Run): LintJson => JSON.parse(run.stdout) as LintJson;
const findingLines = (run: Run) => run.stdout.split('\n').filter((line) => /^\S+:\d+:\d+  /.test(line));

describe('cachewright lint: exit codes', () => {
  it(`${CONTRACT} exit 1 when an error that is not accepted remains`, async () => {
    const run = await lintIn(WORKSPACE, []);
    assert.equal(run.code, 1, run.stderr);
    assertNoStack(run);
  });

  it(`${CONTRACT} exit 0 for a file without findings`, async () => {
    const run = await lintIn(WORKSPACE, ['hosts/clean.yaml']);
    assert.equal(run.code, 0, run.stdout + run.stderr);
    assert.equal(findingLines(run).length, 0);
  });

  it(`${CONTRACT} warnings alone exit 0 when --allow-warnings is not given`, async () => {
    const run = await lintIn(WORKSPACE, ['hosts/undersized.yaml']);
    assert.equal(run.code, 0);
    assert.equal(findingLines(run).length, 1);
  });

  it(`${CONTRACT} --allow-warnings N: more than N warnings exit 1, N or fewer exit 0`, async () => {
    const over = await lintIn(WORKSPACE, ['hosts/undersized.yaml', '--allow-warnings', '0']);
    assert.equal(over.code, 1);
    assert.match(over.stderr, /1 warnings? where --allow-warnings lets 0 through/);
    const within = await lintIn(WORKSPACE, ['hosts/undersized.yaml', '--allow-warnings=1']);
    assert.equal(within.code, 0);
  });

  it(`${CONTRACT} accepted findings never count: the only warning in accepted.yaml is accepted`, async () => {
    const run = await lintIn(WORKSPACE, ['hosts/accepted.yaml', '--allow-warnings', '0']);
    assert.equal(run.code, 0, run.stdout);
    assert.equal(findingLines(run).length, 0, 'an accepted finding is hidden in text output');
    assert.match(run.stdout, /1 accepted with a reason/);
  });

  it(`${CONTRACT} usage errors exit 2 with the usage text`, async () => {
    for (const args of [['--format', 'xml'], ['--allow-warnings', '-1'], ['--allow-warnings', 'many'], ['--allow-warnings', '1.5'], ['--colour'], ['--mapping'], ['--config', 'x.yaml'], ['--quiet'], ['--max-warnings', '0']]) {
      const run = await lintIn(WORKSPACE, args);
      assert.equal(run.code, 2, `${args.join(' ')}: ${run.stderr}`);
      assert.match(run.stderr, /^cachewright lint: /);
      assert.match(run.stderr, /usage: cachewright lint/);
      assert.equal(run.stdout, '');
      assertNoStack(run);
    }
  });

  it(`${COMMON} --help prints the usage and exits 0`, async () => {
    const run = await lintIn(WORKSPACE, ['--help']);
    assert.equal(run.code, 0);
    assert.match(run.stdout, /--allow-warnings/);
    assert.doesNotMatch(run.stdout, /--config|--quiet|--max-warnings/);
  });
});

describe('cachewright lint: text output', () => {
  it(`${COMMON} one line per finding: path:line:col, severity, rule id, message; grouped by file`, async () => {
    const run = await lintIn(WORKSPACE, []);
    const lines = findingLines(run);
    assert.equal(lines.length, 3, run.stdout);
    for (const line of lines) assert.match(line, /^hosts\/[\w.]+:\d+:\d+ +(error|warning|info) +[a-z0-9-]+ +\S/);
    // 1 TiB at 64 KiB clusters needs 128 MiB of L2 cache for full coverage (docs/sources.md check table).
    const undersized = lines.find((l) => l.includes('l2-cache-undersized')) ?? '';
    assert.match(undersized, /^hosts\/undersized\.yaml:8:15 +warning +l2-cache-undersized +.*128 MiB/);
    // Findings of one file stay together, files are separated by a blank line.
    const blocks = run.stdout.trim().split('\n\n');
    assert.equal(blocks.length, 4, 'three files with findings plus the summary');
    for (const block of blocks.slice(0, 3)) {
      const files = new Set(block.split('\n').filter((l) => /^\S+:\d+:\d+/.test(l)).map((l) => l.split(':')[0]));
      assert.equal(files.size, 1, block);
    }
  });

  it(`${COMMON} a fixable finding carries a hint of its fix; accepted findings are hidden but counted`, async () => {
    const run = await lintIn(WORKSPACE, []);
    assert.match(run.stdout, /l2-cache-undersized.*\n {4}fix: .*128 MiB/);
    assert.doesNotMatch(run.stdout, /cache-not-aligned/, 'accepted in the mapping file');
    assert.doesNotMatch(run.stdout, /accepted\.yaml/, 'accepted by a comment');
    const summary = run.stdout.trim().split('\n').at(-1) ?? '';
    assert.match(summary, /5 files/);
    assert.match(summary, /5 qcow2 disks/);
    assert.match(summary, /1 error\b/);
    assert.match(summary, /1 warning\b/);
    assert.match(summary, /1 info\b/);
    assert.equal(summary, '5 files, 5 qcow2 disks: 1 error, 1 warning, 1 info; --fix can settle 2; 2 accepted with a reason.');
  });

  it(`${COMMON} paths are relative to the working directory`, async () => {
    const run = await lintIn(path.join(WORKSPACE, 'hosts'), ['undersized.yaml']);
    assert.match(findingLines(run)[0] ?? '', /^undersized\.yaml:8:15 /);
    const fromAbove = await lintIn(path.dirname(WORKSPACE), ['--mapping', 'workspace/cachewright.yaml', 'workspace/hosts/undersized.yaml']);
    assert.match(findingLines(fromAbove)[0] ?? '', /^workspace\/hosts\/undersized\.yaml:8:15 /);
  });

  it(`${CONTRACT} --errors-only shows errors only, and warnings still count against --allow-warnings`, async () => {
    const run = await lintIn(WORKSPACE, ['--errors-only']);
    const lines = findingLines(run);
    assert.equal(lines.length, 1);
    assert.match(lines[0] ?? '', / error +cache-options-conflict /);
    assert.equal(run.code, 1);
    const counted = await lintIn(WORKSPACE, ['hosts/undersized.yaml', '--errors-only', '--allow-warnings', '0']);
    assert.equal(findingLines(counted).length, 0);
    assert.equal(counted.code, 1);
  });
});

describe('cachewright lint: JSON output', () => {
  it(`${CONTRACT} the document's shape: tool, version, files with disks and findings, summary`, async () => {
    const run = await lintIn(WORKSPACE, ['--format', 'json']);
    assert.equal(run.code, 1);
    const doc = json(run);
    assert.equal(doc.tool, 'cachewright');
    assert.match(doc.version, /^\d+\.\d+\.\d+/);
    assert.deepEqual(doc.files.map((f) => f.path), ['hosts/accepted.json', 'hosts/accepted.yaml', 'hosts/clean.yaml', 'hosts/conflict.json', 'hosts/undersized.yaml']);
    for (const file of doc.files) {
      for (const disk of file.disks) assert.deepEqual(Object.keys(disk), ['machine', 'name', 'pointer', 'sizing', 'recommended']);
      for (const finding of file.findings) {
        for (const key of ['rule', 'severity', 'message', 'pointer', 'line', 'column', 'endLine', 'endColumn']) assert.ok(key in finding, `${key} in ${JSON.stringify(finding)}`);
        assert.ok(finding.line >= 1 && finding.column >= 1, 'lines and columns are 1-based');
      }
    }
    // Suppressed findings do not count (docs/cli.md).
    assert.deepEqual(
      { files: doc.summary.files, disks: doc.summary.disks, errors: doc.summary.errors, warnings: doc.summary.warnings, infos: doc.summary.infos },
      { files: 5, disks: 5, errors: 1, warnings: 1, infos: 1 },
    );
  });

  it(`${CACHE} sizing of a 1 TiB disk at 64 KiB clusters: 128 MiB full coverage, 8 MiB configured maps 64 GiB`, async () => {
    const run = await lintIn(WORKSPACE, ['--format', 'json', 'hosts/undersized.yaml']);
    const disk = json(run).files[0]?.disks[0];
    assert.ok(disk);
    assert.equal(disk.machine, 'wren-02');
    assert.equal(disk.name, 'data');
    assert.equal(disk.pointer, '/guests/0/drives/0');
    assert.equal(disk.sizing.virtualSize, TiB);
    assert.equal(disk.sizing.clusterSize, 65536);
    assert.equal(disk.sizing.l2EntryBytes, 8);
    // covered = C * cluster_size / entry_bytes = 8 MiB * 64 KiB / 8 = 64 GiB
    assert.equal(disk.sizing.l2CoveredBytes, (8 * MiB * 65536) / 8);
    assert.equal(disk.sizing.l2FullCoverage, 128 * MiB);
    assert.equal(disk.recommended.l2Cache, 128 * MiB);
    // byte counts are integer literals in the text, not strings
    assert.match(run.stdout, /"virtualSize": 1099511627776,/);
  });

  it(`${CONTRACT} byte counts past 2^53 print exactly (JSON numbers are not limited to doubles, RFC 8259 §6)`, async () => {
    const dir = makeWorkspace({
      'cachewright.yaml': 'version: 1\ninclude: ["*.yaml"]\ndisks: "$.drives[*]"\nfields: { disk: { size: "$.size", clusterSize: "$.cluster" } }\n',
      // 16 PiB + 1 byte: the nearest double is 2^54, one byte short
      'big.yaml': 'drives:\n  - { size: "18014398509481985", cluster: 2M }\n',
    });
    try {
      const run = await lintIn(dir, ['--format', 'json']);
      assert.match(run.stdout, /"virtualSize": 18014398509481985,/);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} a finding: RFC 6901 pointer, 1-based range, fix edits as UTF-16 offsets into the original text`, async () => {
    const run = await lintIn(WORKSPACE, ['--format', 'json', 'hosts/undersized.yaml']);
    const finding = json(run).files[0]?.findings[0];
    assert.ok(finding);
    assert.equal(finding.rule, 'l2-cache-undersized');
    assert.equal(finding.severity, 'warning');
    assert.equal(finding.pointer, '/guests/0/drives/0/cache/l2');
    assert.deepEqual([finding.line, finding.column, finding.endLine, finding.endColumn], [8, 15, 8, 17]);
    const text = fs.readFileSync(path.join(WORKSPACE, 'hosts/undersized.yaml'), 'utf8');
    assert.deepEqual(finding.fix?.edits, [{ offset: text.indexOf('8M'), length: 2, text: '128M' }]);
    assert.ok(finding.fix?.title);
  });

  it(`${CONTRACT} accepted findings stay in the output with their reason`, async () => {
    const doc = json(await lintIn(WORKSPACE, ['--format', 'json']));
    const accepted = doc.files.flatMap((f) => f.findings.filter((x) => x.accepted).map((x) => [f.path, x.rule, x.accepted?.reason]));
    assert.deepEqual(accepted, [
      ['hosts/accepted.json', 'cache-not-aligned', 'kept as provisioned until the next rebuild'],
      ['hosts/accepted.yaml', 'l2-cache-undersized', 'moving to a larger host in the next maintenance window'],
    ]);
  });

  it(`${CONTRACT} file paths are relative to the mapping file's folder wherever the command runs`, async () => {
    const doc = json(await lintIn(path.join(WORKSPACE, 'hosts'), ['--format', 'json', 'undersized.yaml']));
    assert.deepEqual(doc.files.map((f) => f.path), ['hosts/undersized.yaml']);
  });

  it(`${CONTRACT} --errors-only keeps errors only in the findings, the summary still counts everything`, async () => {
    const doc = json(await lintIn(WORKSPACE, ['--format', 'json', '--errors-only']));
    const rules = doc.files.flatMap((f) => f.findings.map((x) => x.rule));
    assert.deepEqual(rules, ['cache-options-conflict']);
    assert.equal(doc.summary.warnings, 1);
  });
});

describe('cachewright lint: which files', () => {
  it(`${CONTRACT} without paths: the mapping's include globs minus its excludes`, async () => {
    const doc = json(await lintIn(WORKSPACE, ['--format', 'json']));
    const paths = doc.files.map((f) => f.path);
    assert.ok(!paths.includes('hosts/old/retired.yaml'), 'excluded by hosts/old/**');
    assert.ok(!paths.includes('notes.yaml'), 'not matched by the include globs');
    assert.ok(!paths.includes('cachewright.yaml'), 'the mapping file is not a definition');
  });

  it(`${COMMON} a named folder is narrowed to what the mapping includes`, async () => {
    const doc = json(await lintIn(WORKSPACE, ['--format', 'json', 'hosts']));
    assert.equal(doc.files.length, 5);
    const old = await lintIn(WORKSPACE, ['--format', 'json', 'hosts/old']);
    assert.equal(old.code, 0);
    assert.equal(json(old).files.length, 0);
    assert.match(old.stderr, /hosts\/old: the mapping file includes no definition files in this folder/);
  });

  it(`${COMMON} a named file is linted even when the mapping does not include it`, async () => {
    const doc = json(await lintIn(WORKSPACE, ['--format', 'json', 'notes.yaml', 'hosts/old/retired.yaml']));
    assert.deepEqual(doc.files.map((f) => f.path), ['hosts/old/retired.yaml', 'notes.yaml']);
    assert.ok(doc.files.every((f) => f.findings.some((x) => x.rule === 'l2-cache-undersized')));
  });

  it(`${CONTRACT} a missing file: exit 2 with its name on stderr, the other files are still linted`, async () => {
    const run = await lintIn(WORKSPACE, ['--format', 'json', 'hosts/missing.yaml', 'hosts/undersized.yaml']);
    assert.equal(run.code, 2);
    assert.match(run.stderr, /^hosts\/missing\.yaml: no such file or directory$/m);
    // JSON readers see it too: an entry with `error` and nothing linted
    assert.deepEqual(json(run).files.map((f) => [f.path, f.error, f.findings.length > 0]), [
      ['hosts/missing.yaml', 'no such file or directory', false],
      ['hosts/undersized.yaml', undefined, true],
    ]);
    assertNoStack(run);
  });

  it(`${CONTRACT} an unreadable file: exit 2 naming it, the other files are still linted`, async () => {
    const dir = makeWorkspace({ 'cachewright.yaml': 'version: 1\ninclude: ["*.yaml"]\ndisks: "$.d[*]"\nfields: { disk: { size: "$.s" } }\n', 'ok.yaml': 'd: []\n' });
    try {
      // A link to itself cannot be read by anyone (root included, who ignores file modes).
      fs.symlinkSync('loop.yaml', path.join(dir, 'loop.yaml'));
      const named = await lintIn(dir, ['loop.yaml', 'ok.yaml']);
      assert.equal(named.code, 2);
      assert.match(named.stderr, /^loop\.yaml: too many levels of symbolic links$/m);
      assert.match(named.stdout, /^1 file, /m);
      assertNoStack(named);
    } finally {
      removeWorkspace(dir);
    }
  });
});

describe('cachewright lint: the mapping file', () => {
  it(`${CONTRACT} found in the working directory or the nearest folder above it`, async () => {
    const run = await lintIn(path.join(WORKSPACE, 'hosts', 'old'), ['--format', 'json']);
    assert.equal(run.code, 1, run.stderr);
    assert.equal(json(run).files.length, 5, 'the workspace mapping, found two folders up');
  });

  it(`${COMMON} none above the working directory: the nearest one above the first named path`, async () => {
    const dir = makeWorkspace({ 'elsewhere.txt': '' });
    try {
      const run = await lintIn(dir, ['--format', 'json', path.join(WORKSPACE, 'hosts', 'undersized.yaml')]);
      assert.equal(run.code, 0, run.stderr);
      assert.deepEqual(json(run).files.map((f) => f.path), ['hosts/undersized.yaml']);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} --mapping names it explicitly`, async () => {
    const run = await lintIn(path.dirname(WORKSPACE), ['--mapping', path.join('workspace', 'cachewright.yaml'), '--format', 'json']);
    assert.equal(json(run).files.length, 5);
  });

  it(`${CONTRACT} none found: exit 2 with a message naming the file names and --mapping`, async () => {
    const dir = makeWorkspace({ 'a.yaml': 'x: 1\n' });
    try {
      const run = await lintIn(dir, []);
      assert.equal(run.code, 2);
      assert.match(run.stderr, /cachewright\.yaml/);
      assert.match(run.stderr, /--mapping/);
      assert.equal(run.stdout, '');
      assertNoStack(run);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} a --mapping file that does not exist: exit 2 naming it`, async () => {
    const run = await lintIn(WORKSPACE, ['--mapping', 'nowhere.yaml']);
    assert.equal(run.code, 2);
    assert.match(run.stderr, /^nowhere\.yaml: cannot read the mapping file: no such file or directory$/m);
  });

  it(`${CONTRACT} a schema problem: exit 2, the mapping file's own path, line and column`, async () => {
    const run = await lintIn(BROKEN_MAPPING, []);
    assert.equal(run.code, 2);
    // `colour:` is the third key of line 8 in broken-mapping/cachewright.yaml, indented two spaces
    assert.match(run.stderr, /^cachewright\.yaml:8:3: .*"colour"/m);
    assert.equal(run.stdout, '');
    assertNoStack(run);
  });

  it(`${CONTRACT} a YAML syntax error in the mapping file: exit 2 with its line and column`, async () => {
    const dir = makeWorkspace({ 'cachewright.yaml': 'version: 1\ndisks: "$.d[*]"\nfields:\n  disk: { size: "$.s"\n' });
    try {
      const run = await lintIn(dir, []);
      assert.equal(run.code, 2);
      assert.match(run.stderr, /^cachewright\.yaml:\d+:\d+: /m);
      assertNoStack(run);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} a JSON mapping file with a syntax error: exit 2 with its line and column`, async () => {
    const dir = makeWorkspace({ 'cachewright.json': '{\n  "version": 1,\n  "disks": "$.d[*]",\n  "fields": { "disk": { "size": "$.s" } },\n}\n' });
    try {
      const run = await lintIn(dir, []);
      assert.equal(run.code, 2);
      // the trailing comma before the closing brace on line 5
      assert.match(run.stderr, /^cachewright\.json:5:1: /m);
      assertNoStack(run);
    } finally {
      removeWorkspace(dir);
    }
  });
});

describe('cachewright lint: definitions that do not parse', () => {
  const mapping = 'version: 1\ninclude: ["*.yaml", "*.json"]\ndisks: "$.drives[*]"\nfields: { disk: { size: "$.size" } }\n';

  it(`${CONTRACT} bad YAML is a parse-error finding at its position, exit 1`, async () => {
    const dir = makeWorkspace({ 'cachewright.yaml': mapping, 'bad.yaml': 'drives:\n  - size: 1T\n    cache: [unclosed\n' });
    try {
      const run = await lintIn(dir, ['--format', 'json']);
      assert.equal(run.code, 1, run.stderr);
      const findings = json(run).files[0]?.findings ?? [];
      assert.equal(findings[0]?.rule, 'parse-error');
      assert.equal(findings[0]?.severity, 'error');
      assert.ok((findings[0]?.line ?? 0) >= 3, `position of the unclosed sequence: ${JSON.stringify(findings[0])}`);
      const text = await lintIn(dir, []);
      assert.match(text.stdout, /^bad\.yaml:\d+:\d+ +error +parse-error /m);
      assertNoStack(text);
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${CONTRACT} bad JSON is a parse-error finding at its position`, async () => {
    const dir = makeWorkspace({ 'cachewright.yaml': mapping, 'bad.json': '{\n  "drives": [\n    { "size": "1T" }\n  ]\n  "more": 1\n}\n' });
    try {
      const run = await lintIn(dir, ['--format', 'json']);
      assert.equal(run.code, 1);
      const finding = json(run).files[0]?.findings[0];
      assert.equal(finding?.rule, 'parse-error');
      assert.equal(finding?.line, 5, 'the missing comma shows where "more" starts');
    } finally {
      removeWorkspace(dir);
    }
  });
});

describe('cachewright lint: progress line', () => {
  const many = (count: number): Record<string, string> => {
    const files: Record<string, string> = { 'cachewright.yaml': 'version: 1\ninclude: ["defs/*.yaml"]\ndisks: "$.drives[*]"\nfields: { disk: { size: "$.size" } }\n' };
    for (let i = 0; i < count; i++) files[`defs/d${String(i).padStart(3, '0')}.yaml`] = 'drives:\n  - size: 20G\n';
    return files;
  };

  it(`${COMMON} many files and a terminal on stderr: one line redrawn in place, erased at the end`, async () => {
    const dir = makeWorkspace(many(60));
    try {
      const run = await lintIn(dir, [], { tty: true });
      assert.equal(run.code, 0);
      assert.match(run.stderr, /\r[a-z]+ \d+\/60 files/);
      assert.ok(run.stderr.endsWith('\r\u001b[K'), JSON.stringify(run.stderr.slice(-20)));
      assert.doesNotMatch(run.stderr, /\n/, 'never a new line of its own');
      assert.doesNotMatch(run.stdout, /\r/, 'stdout is never touched');
      const piped = await lintIn(dir, [], { tty: false });
      assert.equal(piped.stderr, '');
    } finally {
      removeWorkspace(dir);
    }
  });

  it(`${COMMON} few files: no progress line even on a terminal`, async () => {
    const dir = makeWorkspace(many(5));
    try {
      const run = await lintIn(dir, [], { tty: true });
      assert.equal(run.stderr, '');
    } finally {
      removeWorkspace(dir);
    }
  });
});

describe('cachewright lint: image files', () => {
  const files = {
    'cachewright.yaml': 'version: 1\ninclude: ["*.yaml"]\ndisks: "$.drives[*]"\nfields: { disk: { size: "$.size", image: "$.file" } }\n',
    'vm.yaml': 'drives:\n  - { size: 20G, file: images/absent.qcow2 }\n',
  };

  it(`${CONTRACT} a named image that is not there is an image-unreadable error; --no-images skips reading images`, async () => {
    const dir = makeWorkspace(files);
    try {
      const run = await lintIn(dir, ['--format', 'json']);
      assert.equal(run.code, 1);
      const finding = json(run).files[0]?.findings.find((f) => f.rule === 'image-unreadable');
      assert.equal(finding?.severity, 'error');
      assert.equal(finding?.pointer, '/drives/0/file');
      const skipped = await lintIn(dir, ['--format', 'json', '--no-images']);
      assert.equal(skipped.code, 0);
      assert.ok(!json(skipped).files[0]?.findings.some((f) => f.rule.startsWith('image-')));
    } finally {
      removeWorkspace(dir);
    }
  });
});
