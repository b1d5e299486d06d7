// The editor's re-lint after each edit (LintSession) must give exactly what a full lint of the same
// text gives; the fast path is only an optimisation. Checked on generated edit sequences against
// lintDocument, the reference, and it must actually take the fast path for edits inside a disk.
import { strict as assert } from 'node:assert';
import fc from 'fast-check';
import { stringifyJson } from '../../src/core/json';
import { LintSession, lintDocument, loadMapping } from '../../src/lint';

const MAPPING = `version: 1
machines: "$.vms[*]"
disks: "$.volumes[*]"
fields:
  machine: { name: "$.hostname", memory: "$.ram" }
  disk:
    name: "$.label"
    size: "$.capacity"
    clusterSize: "$.block"
    l2Cache: "$.tuning.l2"
    combinedCache: "$.tuning.total"
    cleanupInterval: "$.tuning.sweep"
    backing: "$.base"
    pattern: "$.io.pattern"
`;
const mapping = (() => {
  const loaded = loadMapping(MAPPING, '/fleet/cachewright.yaml');
  if (!loaded.mapping) throw new Error(loaded.problems.map((p) => p.message).join('; '));
  return loaded.mapping;
})();
const PATH = '/fleet/hosts.yaml';

const DEFINITION = `# invented demo fleet for the session test
vms:
  - hostname: wren-01
    ram: 1G
    volumes:
      - label: root
        capacity: 40G
        tuning:
          l2: 2M   # too small
          sweep: 0
      - label: data
        capacity: 1T
        block: 1M
        io: { pattern: random }
        base:
          label: golden
          capacity: 1T
  # cachewright-accept l2-cache-oversized: reviewed
  - hostname: wren-02
    ram: 8G
    volumes:
      - label: root
        capacity: 20G
        tuning: { l2: 64M, total: 80M }
      - label: logs
        capacity: 100G
        block: 256K
`;

const report = (text: string) => stringifyJson(lintDocument({ path: PATH, text }, mapping), 0);

/** Offsets inside the disk items (after each "- label:"), where typing happens. */
function diskOffsets(text: string): number[] {
  const offsets: number[] = [];
  for (const match of text.matchAll(/- label: /g)) {
    const start = (match.index ?? 0) + 2;
    const end = text.indexOf('\n      - ', start + 1);
    for (let i = start + 1; i < (end === -1 ? text.length : end); i++) offsets.push(i);
  }
  return offsets;
}

const ALPHABET = ['1', '2', '6', '4', 'K', 'M', 'G', 'T', ' ', ':', '\n', 'x', '#', '-', '{', '}', ',', '.', '"', '\n        ', '\n          l2: 9M', 'sweep: 600'];

describe('lint session: re-linting as a file is edited', () => {
  it('property: after every edit of a generated sequence, the report equals a full lint of the same text', function () {
    this.timeout(60_000);
    const edit = fc.record({ at: fc.nat(), cut: fc.nat({ max: 3 }), insert: fc.array(fc.constantFrom(...ALPHABET), { maxLength: 3 }) });
    let incremental = 0;
    fc.assert(
      fc.property(fc.array(edit, { minLength: 1, maxLength: 12 }), (edits) => {
        const session = new LintSession(PATH, mapping);
        let text = DEFINITION;
        assert.equal(stringifyJson(session.update(text), 0), report(text));
        for (const e of edits) {
          const offsets = diskOffsets(text);
          if (offsets.length === 0) break;
          const at = offsets[e.at % offsets.length] as number;
          text = text.slice(0, at) + e.insert.join('') + text.slice(Math.min(text.length, at + e.cut));
          assert.equal(stringifyJson(session.update(text), 0), report(text), `after editing at ${at}:\n${text}`);
          if (session.lastUpdate === 'incremental') incremental++;
        }
      }),
      { numRuns: 250 },
    );
    assert.ok(incremental > 30, `the fast path was taken ${incremental} times`);
  });

  it('typing a value inside a disk takes the fast path', () => {
    const session = new LintSession(PATH, mapping);
    session.update(DEFINITION);
    const at = DEFINITION.indexOf('l2: 2M') + 'l2: 2'.length;
    const edited = `${DEFINITION.slice(0, at)}0${DEFINITION.slice(at)}`;
    const result = session.update(edited);
    assert.equal(session.lastUpdate, 'incremental');
    assert.equal(stringifyJson(result, 0), report(edited));
  });

  it('an edit outside every disk, or with anchors in the file, lints the whole file', () => {
    const session = new LintSession(PATH, mapping);
    session.update(DEFINITION);
    const edited = DEFINITION.replace('ram: 1G', 'ram: 2G');
    assert.equal(stringifyJson(session.update(edited), 0), report(edited));
    assert.equal(session.lastUpdate, 'full');
    const anchored = `${DEFINITION}defaults: &d { l2: 1M }\n`;
    session.update(anchored);
    const again = anchored.replace('capacity: 40G', 'capacity: 41G');
    assert.equal(stringifyJson(session.update(again), 0), report(again));
    assert.equal(session.lastUpdate, 'full');
  });
});
