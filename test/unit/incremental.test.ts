// The editor's incremental re-read (src/model/incremental.ts) splices one block-sequence item, read
// alone, into the previous tree and moves every later offset. Whatever it gives must be exactly what
// a full read of the new text gives (YAML 1.2 via the yaml package, the reference reader here):
// the same data, the same node ranges in the same order, the same lines. Checked on generated
// definitions and generated edits inside their disk items; when it declines, the caller reads the
// whole file, so a decline is allowed but counted, and both kinds of case must actually occur.
import { strict as assert } from 'node:assert';
import fc from 'fast-check';
import { isAlias, isMap, isPair, isScalar, isSeq } from 'yaml';
import { readDefinition, type DefinitionDocument } from '../../src/model/document';
import { diffTexts, reparseItem } from '../../src/model/incremental';
import { LineIndex } from '../../src/model/lines';

const PATH = '/fleet/hosts.yaml';

function read(text: string): DefinitionDocument {
  const result = readDefinition(PATH, text);
  assert.ok(result.document, `the generated text must parse:\n${text}\n${JSON.stringify(result.problems)}`);
  return result.document;
}

/** Every node's kind and range, in document order: two trees read alike give the same list. */
function rangesOf(document: DefinitionDocument): string[] {
  const out: string[] = [`doc ${document.tree.range.join(',')}`];
  const walk = (node: unknown): void => {
    if (isPair(node)) {
      walk(node.key);
      walk(node.value);
      return;
    }
    if (isScalar(node) || isAlias(node) || isMap(node) || isSeq(node)) out.push(`${node.constructor.name} ${node.range?.join(',')}`);
    if (isMap(node) || isSeq(node)) for (const item of node.items) walk(item);
  };
  walk(document.tree.contents);
  return out;
}

function lineStarts(lines: LineIndex): number[] {
  return Array.from({ length: lines.lineCount }, (_, i) => lines.lineStart(i + 1));
}

// Values a definition holds: sizes, words, numbers, quoted text, flow maps and lists.
const scalar = fc.constantFrom('40G', '1T', '64K', '2M', '600', '0', 'random', 'qcow2', '"a # quoted"', "'single'", '{ pattern: mixed }', '[a, b]', 'true');
const key = fc.constantFrom('capacity', 'block', 'label', 'kind', 'sweep', 'note');
const diskGen = fc.record({
  fields: fc.uniqueArray(fc.tuple(key, scalar), { minLength: 1, maxLength: 4, selector: ([k]) => k }),
  tuning: fc.option(fc.tuple(fc.constantFrom('2M', '64M', '3000K'), fc.constantFrom('0', '600')), { nil: undefined }),
  comment: fc.boolean(),
  blankAfter: fc.boolean(),
});
const machineGen = fc.record({ name: fc.constantFrom('wren-01', 'kite-02', 'tern-03'), disks: fc.array(diskGen, { minLength: 1, maxLength: 4 }) });
const definitionGen = fc.record({ machines: fc.array(machineGen, { minLength: 1, maxLength: 3 }), eol: fc.constantFrom('\n', '\n', '\r\n'), trailer: fc.boolean() });

type Definition = typeof definitionGen extends fc.Arbitrary<infer T> ? T : never;

/** The text of a generated definition, and the item paths and offsets of its disks. */
function render(definition: Definition): { text: string; disks: { path: (string | number)[]; start: number; end: number }[] } {
  const lines: string[] = ['# generated for the incremental read test', 'vms:'];
  const marks: { path: (string | number)[]; line: number; lines: number }[] = [];
  definition.machines.forEach((machine, m) => {
    lines.push(`  - hostname: ${machine.name}`, '    volumes:');
    machine.disks.forEach((disk, d) => {
      const first = lines.length;
      disk.fields.forEach(([k, v], i) => lines.push(`${i === 0 ? '      - ' : '        '}${k}: ${v}${disk.comment && i === 0 ? '  # first field' : ''}`));
      if (disk.tuning) lines.push('        tuning:', `          l2: ${disk.tuning[0]}`, `          sweep: ${disk.tuning[1]}`);
      marks.push({ path: ['vms', m, 'volumes', d], line: first, lines: lines.length - first });
      if (disk.blankAfter) lines.push('');
    });
  });
  if (definition.trailer) lines.push('defaults:', '  kind: qcow2');
  const eol = definition.eol;
  const text = `${lines.join(eol)}${eol}`;
  const offsetOfLine = (line: number) => lines.slice(0, line).reduce((sum, l) => sum + l.length + eol.length, 0);
  const disks = marks.map((mark) => ({ path: mark.path, start: offsetOfLine(mark.line) + 8, end: offsetOfLine(mark.line + mark.lines) - eol.length }));
  return { text, disks };
}

const PIECES = ['1', '0', 'G', 'M', ' ', ':', '\n', '\r\n', 'x', '#', '-', '{', '}', ',', '"', '&a', '*a', '\n        ', '\n          l2: 9M', '\n      - kind: raw', 'sweep: 600', '\t'];

describe('incremental re-read: one item read alone and spliced in', () => {
  it('property: whenever the splice is taken, the tree, data and lines equal a full read of the new text', function () {
    this.timeout(120_000);
    let spliced = 0;
    let declined = 0;
    const edit = fc.record({ disk: fc.nat(), at: fc.nat(), cut: fc.nat({ max: 4 }), insert: fc.array(fc.constantFrom(...PIECES), { maxLength: 3 }) });
    fc.assert(
      fc.property(definitionGen, edit, (definition, e) => {
        const { text, disks } = render(definition);
        const disk = disks[e.disk % disks.length];
        fc.pre(disk !== undefined && disk.end > disk.start + 1);
        // An offset inside the disk item, after its first character.
        const at = disk.start + 1 + (e.at % (disk.end - disk.start - 1));
        const edited = text.slice(0, at) + e.insert.join('') + text.slice(Math.min(text.length, at + e.cut));
        const change = diffTexts(text, edited);
        fc.pre(change !== undefined);
        const previous = read(text);
        const result = reparseItem(previous, edited, change, disk.path);
        if (result === undefined) {
          declined++;
        } else {
          spliced++;
          const full = readDefinition(PATH, edited);
          assert.ok(full.document, `the splice was taken but a full read fails:\n${edited}`);
          assert.deepEqual(result.data, full.document.data, `data after editing at ${at}:\n${edited}`);
          assert.deepEqual(rangesOf(result), rangesOf(full.document), `ranges after editing at ${at}:\n${edited}`);
          assert.deepEqual(lineStarts(result.lines), lineStarts(full.document.lines));
          assert.equal(result.eol, full.document.eol);
          assert.equal(result.text, edited);
        }
      }),
      { numRuns: 1500 },
    );
    assert.ok(spliced >= 300, `the splice was taken ${spliced} times`);
    assert.ok(declined >= 100, `the splice was declined ${declined} times`);
  });
});

describe('line index after an edit', () => {
  it('property: LineIndex.edited gives the line starts of a fresh index of the new text (LF, CRLF and lone CR, as YAML 1.2 section 5.4 counts them)', () => {
    const piece = fc.constantFrom('a', 'bc', ' ', '\n', '\r', '\r\n', '\n\n');
    const text = fc.array(piece, { maxLength: 30 }).map((p) => p.join(''));
    let ran = 0;
    fc.assert(
      fc.property(text, fc.nat(), fc.nat({ max: 5 }), fc.array(piece, { maxLength: 4 }), (before, at, cut, insert) => {
        const start = before.length === 0 ? 0 : at % (before.length + 1);
        const after = before.slice(0, start) + insert.join('') + before.slice(Math.min(before.length, start + cut));
        const change = diffTexts(before, after) ?? { start: 0, oldEnd: 0, newEnd: 0, delta: 0 };
        const edited = new LineIndex(before).edited(after, change);
        assert.deepEqual(lineStarts(edited), lineStarts(new LineIndex(after)), JSON.stringify({ before, after }));
        for (let offset = 0; offset <= after.length; offset++) assert.deepEqual(edited.position(offset), new LineIndex(after).position(offset));
        ran++;
      }),
      { numRuns: 2000 },
    );
    assert.equal(ran, 2000);
  });

  it('diffTexts finds the one replaced span, also across its comparison chunks', () => {
    const base = 'x'.repeat(3000);
    const after = `${base.slice(0, 1500)}yy${base.slice(1501)}`;
    // The common prefix and suffix overlap in a run of equal characters: the prefix is taken first.
    assert.deepEqual(diffTexts(base, after), { start: 1500, oldEnd: 1501, newEnd: 1502, delta: 1 });
    assert.equal(diffTexts(base, base), undefined);
    const a = `${'a'.repeat(1200)}B${'c'.repeat(1300)}`;
    const b = `${'a'.repeat(1200)}DE${'c'.repeat(1300)}`;
    assert.deepEqual(diffTexts(a, b), { start: 1200, oldEnd: 1201, newEnd: 1202, delta: 1 });
  });
});
