// Applying fixes until none is left: for generated definitions, each pass applies every safe fix
// that does not overlap another (the way --fix and "fix all" do), and within a few passes no
// fixable finding remains. No pass may break the file, touch bytes outside its edits, or make a
// value unreadable.
import { strict as assert } from 'node:assert';
import fc from 'fast-check';
import { stringify as yamlStringify } from 'yaml';
import type { TextEdit } from '../../src/core/results';
import { applyEdits, nonOverlapping } from '../../src/model/edits';
import { DEFINITION_DIR, lintCase } from './harness';

function applyChecked(text: string, edits: readonly TextEdit[]): string {
  const sorted = [...edits].sort((a, b) => a.offset - b.offset);
  const fixed = applyEdits(text, sorted);
  let from = 0;
  let at = 0;
  for (const edit of sorted) {
    const kept = text.slice(from, edit.offset);
    assert.equal(fixed.slice(at, at + kept.length), kept, 'bytes between edits are kept');
    at += kept.length + edit.text.length;
    from = edit.offset + edit.length;
  }
  assert.equal(fixed.slice(at), text.slice(from), 'bytes after the last edit are kept');
  return fixed;
}

const size = fc.constantFrom('8G', '20G', '100G', '256G', '500G', '1T', '2T', '4T', '1280M');
const cluster = fc.constantFrom('4K', '16K', '64K', '256K', '1M', '2M');
const cacheSize = fc.constantFrom('128K', '192K', '1000K', '1M', '2.5M', '3000K', '8M', '20M', '32M', '64M', '128M', '1G');
const optional = <T>(arb: fc.Arbitrary<T>) => fc.option(arb, { nil: undefined });
const diskArb = fc.letrec((tie) => ({
  disk: fc.record({
    name: fc.constantFrom('root', 'data', 'log'),
    size,
    cluster: optional(cluster),
    cache: optional(fc.record({
      l2: optional(cacheSize),
      refcount: optional(fc.constantFrom('256K', '1M', '100K')),
      total: optional(cacheSize),
      slice: optional(fc.constantFrom('4K', '8K')),
      cleanup: optional(fc.constantFrom(0, 600, '10m')),
    }, { requiredKeys: [] })),
    backing: optional(fc.oneof({ maxDepth: 1 }, fc.constant('base.qcow2'), tie('disk'))),
    io: optional(fc.record({ size: optional(fc.constantFrom('4K', '64K')), pattern: optional(fc.constantFrom('random', 'sequential', 'mixed')) }, { requiredKeys: [] })),
  }, { requiredKeys: ['name', 'size'] }),
})).disk;
const definition = fc.record({ machines: fc.array(fc.record({ name: fc.constantFrom('a', 'b'), memory: optional(fc.constantFrom('1G', '16G')), disks: fc.array(diskArb, { minLength: 1, maxLength: 3 }) }), { minLength: 1, maxLength: 2 }) });
const style = fc.constantFrom(
  (d: unknown) => ({ text: yamlStringify(d, { aliasDuplicateObjects: false }), json: false }),
  (d: unknown) => ({ text: yamlStringify(d, { aliasDuplicateObjects: false, collectionStyle: 'flow' }), json: false }),
  (d: unknown) => ({ text: JSON.stringify(d, null, 2), json: true }),
  (d: unknown) => ({ text: JSON.stringify(d, null, '\t').replace(/\n/g, '\r\n'), json: true }),
);
const assume = fc.record({ driver: fc.constantFrom('current', 'legacy'), platform: fc.constantFrom('linux', 'other') });

describe('fixes converge', () => {
  it('property: within 4 passes of non-overlapping fixes no fixable finding is left, and every pass keeps the file readable', () => {
    fc.assert(fc.property(definition, style, assume, (data, write, assumed) => {
      const { text: original, json } = write(data);
      const mapping = { assume: assumed };
      const file = `${DEFINITION_DIR}/converge.${json ? 'json' : 'yaml'}`;
      let text = original;
      const invalidBefore = lintCase({ text, mapping, file }).findings.filter((f) => f.rule === 'invalid-value').length;
      for (let pass = 0; pass < 4; pass++) {
        const report = lintCase({ text, mapping, file });
        assert.equal(report.parsed, true, `pass ${pass} left a file that does not parse:\n${text}`);
        assert.ok(report.findings.filter((f) => f.rule === 'invalid-value').length <= invalidBefore, `pass ${pass} made a value unreadable:\n${text}`);
        const fixable = report.findings.filter((f) => f.fix && !f.accepted);
        if (fixable.length === 0) return;
        const { chosen } = nonOverlapping(fixable.map((f) => f.fix as NonNullable<typeof f.fix>));
        text = applyChecked(text, chosen.flatMap((f) => f.edits));
      }
      const left = lintCase({ text, mapping, file }).findings.filter((f) => f.fix && !f.accepted);
      assert.deepEqual(left.map((f) => `${f.rule} ${f.range.line}:${f.range.column} ${f.message}`), [], `still fixable after 4 passes:\n${original}\n---\n${text}`);
    }), { numRuns: 120 });
  });
});
