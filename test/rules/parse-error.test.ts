// parse-error: a definition that is not valid YAML (YAML 1.2) or JSON ([RFC 8259]) is one error at
// the place the parser stopped, and the file is marked unparsed so --fix leaves it alone.
import { strict as assert } from 'node:assert';
import { RFC8259 } from '../helpers/sources';
import { oversizedFileReport } from '../../src/lint';
import { CONTRACT } from '../helpers/sources';
import { addTextSource, DEFINITION_DIR, lintCase, ruleTable, textsOf } from './harness';

const RULE = 'parse-error';
const YAML12 = '[YAML 1.2]';

ruleTable(RULE, {
  valid: [
    { name: 'an empty YAML file has no machines and no error', text: '' },
    { name: 'a YAML file of comments only', text: '# nothing here yet\n' },
    { name: 'a YAML document whose machines key holds a scalar: nothing to select', text: 'machines: 5\n' },
    { name: `${YAML12} an alias that refers to its own anchor's collection`, text: 'a: &x [1, 2]\nb: *x\n' },
    { name: `${RFC8259} JSON with a UTF-8 byte order mark`, text: '\uFEFF{ "machines": [] }\n' },
  ],
  invalid: [
    {
      name: `${YAML12} duplicate keys in one map`,
      text: 'machines:\n  - name: a\n    name: b\n',
      findings: [{ rule: RULE, line: 3, column: 5, messageIncludes: 'unique' }],
    },
    {
      name: `${YAML12} a compact mapping nested on one line`,
      text: 'a: b: c\n',
      findings: [{ rule: RULE, line: 1, column: 4 }],
    },
    {
      name: `${YAML12} an unterminated double-quoted string`,
      text: 'machines: "pier\n',
      findings: [{ rule: RULE, line: 2, column: 1, messageIncludes: 'quote' }],
    },
    {
      name: `${RFC8259} a trailing comma in a JSON object: at the character after it`,
      text: '{\n  "machines": [\n    { "name": "a", }\n  ]\n}\n',
      findings: [{ rule: RULE, line: 3, column: 20, messageIncludes: 'not valid JSON' }],
    },
    {
      name: `${RFC8259} a missing colon in JSON`,
      text: '{"machines" []}',
      findings: [{ rule: RULE, line: 1, column: 13 }],
    },
    {
      name: `${RFC8259} duplicate names in a JSON object are refused (the mapping could not tell which one counts)`,
      text: '{"machines": [], "machines": []}',
      findings: [{ rule: RULE, line: 1, column: 18, messageIncludes: 'unique' }],
    },
    {
      name: `${RFC8259} a trailing comma in a JSON array: at the closing bracket`,
      text: '{"machines": [1,]}',
      findings: [{ rule: RULE, line: 1, column: 17 }],
    },
    {
      name: `${RFC8259} JSON that ends early: at the end of the text`,
      text: '{"machines":',
      findings: [{ rule: RULE, line: 1, column: 13 }],
    },
    {
      name: `${RFC8259} a misspelt literal in JSON: at the bad token`,
      text: '{"machines": tru}',
      findings: [{ rule: RULE, line: 1, column: 14, messageIncludes: 'expected a value' }],
    },
  ],
});

// A file above the size limit is left unread: one parse-error at its start (docs/cli.md, --file-size-limit).
const oversized = () => oversizedFileReport(`${DEFINITION_DIR}/big.yaml`, 70_000n, 64n * 1024n, 'raise the limit to lint it');
addTextSource(RULE, { produce: () => textsOf(oversized().findings) });

describe(`rule ${RULE}: the file is left alone`, () => {
  it(`${CONTRACT} a file above the size limit is one finding naming its size, in IEC units and exact bytes, and the limit`, () => {
    const report = oversized();
    assert.equal(report.parsed, false);
    assert.deepEqual(
      report.findings.map((f) => [f.rule, f.range.line, f.range.column, f.message]),
      [[RULE, 1, 1, 'big.yaml is ~68.35 KiB (70000 bytes), above the size limit of 64 KiB for definition files, so it is not linted; raise the limit to lint it']],
    );
  });
  it('an unparsed file reports parsed: false and no disks', () => {
    const report = lintCase({ text: 'machines:\n  - name: a\n    name: b\n' });
    assert.equal(report.parsed, false);
    assert.deepEqual(report.disks, []);
    assert.ok(report.findings.every((f) => f.rule === RULE && f.severity === 'error' && !f.fix));
  });
  it(`${RFC8259} a message carries no JavaScript stack or "at position" suffix`, () => {
    for (const text of ['{"a": 1}\n{"b": 2}', '{"a" 1}', '{"machines": [1,]}']) {
      for (const finding of lintCase({ text }).findings) {
        assert.doesNotMatch(finding.message, /at position \d+|\n\s+at /, finding.message);
      }
    }
  });
});
