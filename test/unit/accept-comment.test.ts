// The accept comment the editor writes for a finding: written where docs/mapping-file.md says an
// accept comment goes, and read back by the linter as accepting exactly that finding. Checked on
// every finding of the demo's YAML definitions (and the host findings over the demo fleet), so the
// writer and the reader of the comment cannot drift apart.
import { strict as assert } from 'node:assert';
import { readFileSync } from 'node:fs';
import * as path from 'node:path';
import { acceptCommentEdit, lintDocument, lintHosts, loadMapping, type FileReport, type Finding, type Mapping } from '../../src/lint';
import { applyEdits } from '../../src/model/edits';
import { CONTRACT } from '../helpers/sources';

const ROOT = path.resolve(__dirname, '../..');
const DEMO_MAPPING = path.join(ROOT, 'examples/cachewright.yaml');
const TICKETING = path.join(ROOT, 'examples/fleet/ticketing.yaml');
const HARBOUR = path.join(ROOT, 'examples/fleet/harbour.json');
const REASON = 'sized for the spring timetable import; revisit after it';

function demoMapping(): Mapping {
  const load = loadMapping(readFileSync(DEMO_MAPPING, 'utf8'), DEMO_MAPPING);
  assert.ok(load.mapping, load.problems.map((p) => p.message).join('; '));
  return load.mapping;
}

const lint = (file: string, text: string, mapping: Mapping): FileReport => lintDocument({ path: file, text }, mapping);
const sameFinding = (a: Finding, b: Finding): boolean => a.rule === b.rule && a.pointer === b.pointer && a.message === b.message;

/** The demo's files linted together, host rules included (as the CLI and the editor do). */
function lintFleet(texts: ReadonlyMap<string, string>, mapping: Mapping): Map<string, FileReport> {
  const reports = new Map([...texts].map(([file, text]) => [file, lint(file, text, mapping)]));
  lintHosts([...reports].map(([file, report]) => ({ path: file, machines: report.machines, findings: report.findings })), mapping);
  return reports;
}

describe('accept comments written for a finding', () => {
  const mapping = demoMapping();
  const text = readFileSync(TICKETING, 'utf8');

  it(`${CONTRACT} accepts exactly the finding it is written for, on every disk and machine finding of the demo`, () => {
    const report = lint(TICKETING, text, mapping);
    let written = 0;
    for (const finding of report.findings.filter((f) => !f.accepted && f.machine !== undefined)) {
      const edit = acceptCommentEdit(text, report, finding, REASON);
      assert.ok(edit.ok, `${finding.rule} at ${finding.pointer}: ${edit.ok ? '' : edit.error}`);
      const after = lint(TICKETING, applyEdits(text, [edit.value]), mapping);
      const accepted = after.findings.find((f) => sameFinding(f, finding));
      assert.deepEqual(accepted?.accepted, { reason: REASON, from: 'comment' }, `${finding.rule} at ${finding.pointer}`);
      assert.ok(!after.findings.some((f) => f.rule === 'invalid-suppression'), 'the comment is one the linter reads');
      // Nothing else changes its state: other rules, and the same rule on other disks, stay as they were.
      for (const other of report.findings.filter((f) => !(f.rule === finding.rule && f.pointer.startsWith(finding.pointer)))) {
        const now = after.findings.find((f) => sameFinding(f, other));
        assert.deepEqual(now?.accepted, other.accepted, `${other.rule} at ${other.pointer} after accepting ${finding.rule} at ${finding.pointer}`);
      }
      written++;
    }
    assert.ok(written >= 5, `${written} findings of the demo accepted one at a time`);
  });

  it(`${CONTRACT} writes the line above the disk, indented like it, as docs/mapping-file.md shows`, () => {
    const report = lint(TICKETING, text, mapping);
    const finding = report.findings.find((f) => f.rule === 'l2-cache-undersized' && f.disk === 'ledger');
    assert.ok(finding, 'the demo ledger disk has an undersized L2 cache');
    const edit = acceptCommentEdit(text, report, finding, `  ${REASON}\n  (two lines)  `);
    assert.ok(edit.ok);
    const lines = applyEdits(text, [edit.value]).split('\n');
    const at = lines.findIndex((l) => l.includes('# cachewright-accept l2-cache-undersized'));
    assert.equal(lines[at], `      # cachewright-accept l2-cache-undersized: ${REASON} (two lines)`);
    assert.match(lines[at + 1] ?? '', /^ {6}- label: ledger$/);
  });

  it(`${CONTRACT} accepts a host finding on the host line of the first machine placed there`, () => {
    const texts = new Map([[TICKETING, text], [HARBOUR, readFileSync(HARBOUR, 'utf8')]]);
    const before = lintFleet(texts, mapping);
    const hostFindings = [...before].flatMap(([file, report]) => report.findings.filter((f) => f.host !== undefined && !f.accepted && file === TICKETING).map((f) => ({ file, report, finding: f })));
    assert.ok(hostFindings.length > 0, 'the demo fleet has a host finding in the YAML file');
    for (const { file, report, finding } of hostFindings) {
      const edit = acceptCommentEdit(text, report, finding, REASON);
      assert.ok(edit.ok, edit.ok ? '' : edit.error);
      const after = lintFleet(new Map([...texts, [file, applyEdits(text, [edit.value])]]), mapping);
      const accepted = after.get(file)?.findings.find((f) => f.rule === finding.rule && f.host === finding.host);
      assert.deepEqual(accepted?.accepted, { reason: REASON, from: 'comment' });
    }
  });

  it(`${CONTRACT} keeps the file's line ends (CRLF stays CRLF)`, () => {
    const crlf = text.replace(/\n/g, '\r\n');
    const report = lint(TICKETING, crlf, mapping);
    const finding = report.findings.find((f) => f.disk !== undefined && !f.accepted);
    assert.ok(finding);
    const edit = acceptCommentEdit(crlf, report, finding, REASON);
    assert.ok(edit.ok);
    assert.ok(edit.value.text.endsWith('\r\n') && !edit.value.text.slice(0, -2).includes('\n'), JSON.stringify(edit.value.text));
    const after = lint(TICKETING, applyEdits(crlf, [edit.value]), mapping);
    assert.ok(after.findings.find((f) => sameFinding(f, finding))?.accepted);
  });

  it(`${CONTRACT} says why when no comment can be written`, () => {
    const cases: { name: string; file: string; text: string; pick: (f: Finding) => boolean; why: RegExp; reason?: string }[] = [
      { name: 'JSON has no comments', file: HARBOUR, text: readFileSync(HARBOUR, 'utf8'), pick: (f) => f.disk !== undefined, why: /JSON has no comments/ },
      { name: 'a finding of the file itself', file: TICKETING, text: `# cachewright-accept no-such-rule: typo\n${text}`, pick: (f) => f.rule === 'invalid-suppression', why: /belongs to no disk or machine/ },
      { name: 'a reason of blanks', file: TICKETING, text, pick: (f) => f.disk !== undefined, why: /needs a reason/, reason: ' \n ' },
      {
        name: 'a disk sharing its first line with another',
        file: path.join(ROOT, 'examples/fleet/flow.yaml'),
        text: 'vms:\n  - hostname: gull-flow-01\n    volumes: [{ label: a, capacity: 1T, kind: qcow2, tuning: { l2: 1M } }, { label: b, capacity: 1T, kind: qcow2, tuning: { l2: 1M } }]\n',
        pick: (f) => f.disk === 'b',
        why: /same line as another/,
      },
    ];
    for (const c of cases) {
      const report = lint(c.file, c.text, mapping);
      const finding = report.findings.find(c.pick);
      assert.ok(finding, `${c.name}: a finding to try`);
      const edit = acceptCommentEdit(c.text, report, finding, c.reason ?? REASON);
      assert.equal(edit.ok, false, c.name);
      assert.match(edit.ok ? '' : edit.error, c.why, c.name);
    }
  });
});
