// Table-driven rule tests: each case is a small definition file (YAML or JSON) linted against a
// mapping file written for the tests, with the findings of one rule it must (or must not) give.
// A fixable rule also gets a round trip: apply its fix, lint again, the finding is gone and no byte
// outside the edits has changed.
import { strict as assert } from 'node:assert';
import { lintDocument, loadMapping, type FileReport, type Finding, type LintOptions, type Mapping } from '../../src/lint';
import { applyEdits } from '../../src/model/edits';

/** Where the test definitions live; nothing is read from disk, the path only names the file. */
export const DEFINITION_DIR = '/virtual/fleet';

/**
 * The mapping every rule test starts from: machines under `machines`, disks under `disks`, each
 * cache knob under `cache`. Overrides are merged into it key by key.
 */
export const BASE_MAPPING: MappingObject = {
  version: 1,
  machines: '$.machines[*]',
  disks: '$.disks[*]',
  fields: {
    machine: { name: '$.name', memory: '$.memory' },
    disk: {
      name: '$.name',
      size: '$.size',
      clusterSize: '$.cluster',
      format: '$.format',
      l2Cache: '$.cache.l2',
      refcountCache: '$.cache.refcount',
      combinedCache: '$.cache.total',
      cacheEntrySize: '$.cache.slice',
      cleanupInterval: '$.cache.cleanup',
      extendedL2: '$.extendedL2',
      image: '$.image',
      backing: '$.backing',
      requestSize: '$.io.size',
      pattern: '$.io.pattern',
      trace: '$.io.trace',
    },
  },
};

export type MappingObject = { [key: string]: unknown };

export interface ExpectedFinding {
  rule: string;
  line: number;
  column: number;
  messageIncludes?: string | string[];
}

export interface RuleCase {
  name: string;
  /** The definition file's text; JSON when it starts with "{" or "[" (after a BOM), else YAML. */
  text: string;
  /** Merged into BASE_MAPPING; a key set to undefined is removed. */
  mapping?: MappingObject;
  /** For invalid cases: exactly the findings of the rule under test, in order. */
  findings?: ExpectedFinding[];
  /** Absolute path of the definition file (image paths are relative to it); default under DEFINITION_DIR. */
  file?: string;
  /** Lint options, computed when the case runs (e.g. the facts of images written by `before`). */
  options?: () => LintOptions;
}

export interface RuleTable {
  valid: RuleCase[];
  invalid: RuleCase[];
  /** For fixable rules: one case whose first finding of the rule carries a fix. */
  fix?: RuleCase;
  /** Runs once before the cases (e.g. writes the image files they name), and after them. */
  before?: () => void | Promise<void>;
  after?: () => void | Promise<void>;
}

const isPlainObject = (value: unknown): value is MappingObject =>
  typeof value === 'object' && value !== null && !Array.isArray(value);

export function mergeMapping(base: MappingObject, overrides: MappingObject = {}): MappingObject {
  const result: MappingObject = { ...base };
  for (const [key, value] of Object.entries(overrides)) {
    if (value === undefined) delete result[key];
    else if (isPlainObject(value) && isPlainObject(result[key])) result[key] = mergeMapping(result[key] as MappingObject, value);
    else result[key] = value;
  }
  return result;
}

export function mappingFor(overrides?: MappingObject): Mapping {
  const text = JSON.stringify(mergeMapping(BASE_MAPPING, overrides), null, 2);
  const load = loadMapping(text, `${DEFINITION_DIR}/../cachewright.json`);
  if (!load.mapping) assert.fail(`the test mapping does not load: ${load.problems.map((p) => p.message).join('; ')}`);
  return load.mapping;
}

export function pathFor(text: string): string {
  return /^\uFEFF?\s*[{[]/.test(text) ? `${DEFINITION_DIR}/case.json` : `${DEFINITION_DIR}/case.yaml`;
}

export function lintCase(testCase: Pick<RuleCase, 'text' | 'mapping' | 'file' | 'options'>): FileReport {
  const file = testCase.file ?? pathFor(testCase.text);
  return lintDocument({ path: file, text: testCase.text }, mappingFor(testCase.mapping), testCase.options?.() ?? {});
}

/**
 * One machine "pier-db" with one disk "data": `disk` holds the disk's other keys, one per line and
 * unindented; they land on lines 5, 6, ... at column 9.
 */
export const oneDisk = (disk: string, machineKeys = ''): string =>
  ['machines:', '  - name: pier-db', ...(machineKeys ? machineKeys.split('\n').map((l) => `    ${l}`) : []), '    disks:', '      - name: data', ...disk.split('\n').map((l) => `        ${l}`)].join('\n') + '\n';

/** YAML written in a test with a common indent; the first line break and the indent are dropped. */
export function yaml(strings: TemplateStringsArray, ...values: unknown[]): string {
  const raw = strings.reduce((text, part, i) => text + part + (i < values.length ? String(values[i]) : ''), '');
  const lines = raw.replace(/^\n/, '').replace(/\n[ ]*$/, '\n').split('\n');
  const indent = Math.min(...lines.filter((l) => l.trim()).map((l) => (/^ */.exec(l) as RegExpExecArray)[0].length));
  return lines.map((l) => l.slice(indent)).join('\n');
}

const describeFinding = (f: Finding): string => `${f.rule} ${f.range.line}:${f.range.column} ${f.message}`;

export function findingsOf(report: FileReport, rule: string): Finding[] {
  return report.findings.filter((f) => f.rule === rule);
}

function assertFindings(report: FileReport, rule: string, expected: readonly ExpectedFinding[]): void {
  const actual = findingsOf(report, rule);
  const all = report.findings.map(describeFinding).join('\n  ');
  assert.deepEqual(
    actual.map((f) => ({ rule: f.rule, line: f.range.line, column: f.range.column })),
    expected.map((e) => ({ rule: e.rule, line: e.line, column: e.column })),
    `findings of ${rule}; all findings:\n  ${all}`,
  );
  expected.forEach((e, i) => {
    const fragments = e.messageIncludes === undefined ? [] : Array.isArray(e.messageIncludes) ? e.messageIncludes : [e.messageIncludes];
    const message = (actual[i] as Finding).message;
    for (const fragment of fragments) assert.ok(message.includes(fragment), `message ${JSON.stringify(message)} should include ${JSON.stringify(fragment)}`);
  });
}

/**
 * Applies a fix and checks that the text outside its edits kept every byte: the parts between the
 * edits of the fixed text are exactly the parts between the edits of the original.
 */
export function applyFixChecked(text: string, finding: Finding): string {
  assert.ok(finding.fix, `${finding.rule} should carry a fix`);
  const edits = [...finding.fix.edits].sort((a, b) => a.offset - b.offset);
  const fixed = applyEdits(text, edits);
  let originalAt = 0;
  let fixedAt = 0;
  for (const edit of edits) {
    const kept = text.slice(originalAt, edit.offset);
    assert.equal(fixed.slice(fixedAt, fixedAt + kept.length), kept, 'bytes before an edit must not change');
    fixedAt += kept.length;
    assert.equal(fixed.slice(fixedAt, fixedAt + edit.text.length), edit.text);
    fixedAt += edit.text.length;
    originalAt = edit.offset + edit.length;
  }
  assert.equal(fixed.slice(fixedAt), text.slice(originalAt), 'bytes after the last edit must not change');
  return fixed;
}

/** The round trip of one fixable rule; returns the fixed text for further checks. */
export function roundTrip(rule: string, testCase: RuleCase): string {
  const before = lintCase(testCase);
  const finding = findingsOf(before, rule).find((f) => f.fix);
  assert.ok(finding, `${rule} should report a fixable finding; got:\n  ${before.findings.map(describeFinding).join('\n  ')}`);
  const fixed = applyFixChecked(testCase.text, finding);
  const after = lintCase({ ...testCase, text: fixed });
  assert.equal(after.parsed, true, `the fixed text must still parse:\n${fixed}`);
  assert.deepEqual(findingsOf(after, 'parse-error'), []);
  assert.deepEqual(findingsOf(after, 'invalid-value').map(describeFinding), findingsOf(before, 'invalid-value').map(describeFinding), 'a fix must not make a value unreadable');
  const again = findingsOf(after, rule).filter((f) => f.pointer === finding.pointer || f.pointer.startsWith(`${finding.pointer}/`));
  assert.deepEqual(again.map(describeFinding), [], `after the fix:\n${fixed}`);
  return fixed;
}

/**
 * The texts a rule's tests produce: its findings' messages, their related places' messages and the
 * titles of their fixes. test/rules/wording.test.ts replays every source of a rule and checks the
 * texts against the rule's wording (every key said, nothing said outside it).
 */
export interface ProducedTexts {
  messages: string[];
  /** Related places' messages and fix titles: said from the wording too. */
  others: string[];
}

export interface TextSource {
  before?: () => void | Promise<void>;
  after?: () => void | Promise<void>;
  produce(): ProducedTexts;
}

/** Every rule's text sources by rule id, filled as the rule test files load. */
export const TEXT_SOURCES = new Map<string, TextSource[]>();

export function addTextSource(rule: string, source: TextSource): void {
  TEXT_SOURCES.set(rule, [...(TEXT_SOURCES.get(rule) ?? []), source]);
}

/** The texts of one rule's findings in some reports. */
export function textsOf(findings: readonly Finding[]): ProducedTexts {
  return {
    messages: findings.map((f) => f.message),
    others: findings.flatMap((f) => [...(f.related ?? []).map((r) => r.message), ...[f.fix, ...(f.alternatives ?? [])].flatMap((x) => (x ? [x.title] : []))]),
  };
}

/** Registers the mocha cases of one rule's table. */
export function ruleTable(rule: string, table: RuleTable): void {
  addTextSource(rule, {
    ...(table.before ? { before: table.before } : {}),
    ...(table.after ? { after: table.after } : {}),
    produce: () => {
      const cases = [...table.valid, ...table.invalid, ...(table.fix ? [table.fix] : [])];
      const found = cases.map((c) => textsOf(findingsOf(lintCase(c), rule)));
      return { messages: found.flatMap((t) => t.messages), others: found.flatMap((t) => t.others) };
    },
  });
  describe(`rule ${rule}`, () => {
    if (table.before) before(table.before);
    if (table.after) after(table.after);
    describe('valid: no finding of this rule', () => {
      for (const testCase of table.valid) {
        it(testCase.name, () => {
          const report = lintCase(testCase);
          assert.equal(report.parsed, true, 'the case must parse');
          assertFindings(report, rule, []);
        });
      }
    });
    describe('invalid: exactly these findings', () => {
      for (const testCase of table.invalid) {
        it(testCase.name, () => {
          assert.ok(testCase.findings && testCase.findings.length > 0, 'an invalid case lists its findings');
          assertFindings(lintCase(testCase), rule, testCase.findings);
        });
      }
    });
    const fixCase = table.fix;
    if (fixCase) {
      describe('fix round trip', () => {
        it(fixCase.name, () => {
          roundTrip(rule, fixCase);
        });
        // The same case with CRLF line ends and with a UTF-8 byte order mark: the fix must keep
        // every other byte, the line ends and the mark included.
        it(`${fixCase.name} (CRLF line ends)`, () => {
          const fixed = roundTrip(rule, { ...fixCase, text: fixCase.text.replace(/\r?\n/g, '\r\n') });
          assert.doesNotMatch(fixed, /[^\r]\n/, 'every line break stays CRLF');
        });
        it(`${fixCase.name} (UTF-8 byte order mark)`, () => {
          const fixed = roundTrip(rule, { ...fixCase, text: `\uFEFF${fixCase.text}` });
          assert.ok(fixed.startsWith('\uFEFF') && fixed.indexOf('\uFEFF', 1) === -1, 'the mark stays first, once');
        });
      });
    }
  });
}
