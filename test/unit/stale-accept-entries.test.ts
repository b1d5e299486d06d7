// Entries of the mapping file's accept list that accept nothing any more (docs/mapping-file.md, "the
// accept list"): the engine records how each entry fared in every file it reaches, and only a run
// over every file the mapping includes names the stale ones, on stderr, leaving the exit status alone.
import { strict as assert } from 'node:assert';
import * as path from 'node:path';
import { staleAcceptEntries, type FileReport } from '../../src/lint';
import type { ImageLookup } from '../../src/model/images';
import { CONTRACT } from '../helpers/sources';
import { lintIn, makeWorkspace, removeWorkspace } from '../fixtures/lint/run';
import { DEFINITION_DIR, lintCase, mappingFor, type MappingObject } from '../rules/harness';

const FILE = path.join(DEFINITION_DIR, 'fleet.yaml');
// 1 TiB at 64 KiB clusters needs 128 MiB of L2 for full coverage (1 TiB / 64 KiB * 8 bytes [qcow2
// specification]): 8M is undersized, 256M oversized.
const TEXT = ['machines:', '  - name: m', '    disks:', '      - { name: small, size: 1T, cache: { l2: 8M } }', '      - { name: large, size: 1T, cache: { l2: 256M } }', ''].join('\n');

const entry = (rule: string, pointer: string, extra: Record<string, string> = {}) => ({ rule, pointer, reason: 'reviewed', ...extra });

function staleOf(accept: object[], options: { text?: string; complete?: boolean; rules?: MappingObject; images?: ImageLookup } = {}): number[] {
  const overrides: MappingObject = { accept, ...(options.rules ? { rules: options.rules } : {}) };
  const lookup = options.images;
  const report: FileReport = lintCase({ text: options.text ?? TEXT, file: FILE, mapping: overrides, ...(lookup ? { options: () => ({ images: lookup }) } : {}) });
  const files = [{ path: FILE, ...(report.acceptEntries ? { acceptEntries: report.acceptEntries } : {}) }];
  return staleAcceptEntries(files, mappingFor(overrides), options.complete ?? true).map((s) => s.entry);
}

describe('stale entries of the accept list', () => {
  it(`${CONTRACT} an entry with a finding to accept is not stale; one at a disk without that finding is`, () => {
    assert.deepEqual(staleOf([entry('l2-cache-undersized', '/machines/0/disks/0'), entry('l2-cache-undersized', '/machines/0/disks/1'), entry('l2-cache-oversized', '/machines/0/disks/1')]), [1]);
  });

  it(`${CONTRACT} an entry for a file the run did not lint reaches nothing`, () => {
    assert.deepEqual(staleOf([entry('l2-cache-undersized', '/machines/0/disks/0', { file: 'gone.yaml' })]), [0]);
  });

  it(`${CONTRACT} entries for rules that read images, traces or other files are not judged, nor rules turned off`, () => {
    assert.deepEqual(staleOf([entry('image-mismatch', '/machines/0'), entry('host-cache-budget', '/machines/0'), entry('l2-cache-above-working-set', '/machines/0/disks/0')]), []);
    assert.deepEqual(staleOf([entry('cluster-cow-amplification', '/machines/0/disks/0')], { rules: { 'cluster-cow-amplification': 'off' } }), []);
  });

  it(`${CONTRACT} an entry reaching a disk with an unread image, or with a value still to correct, is not judged`, () => {
    const text = ['machines:', '  - name: m', '    disks:', '      - { name: a, size: 1T, image: a.qcow2 }', '      - { name: b, size: lots }', ''].join('\n');
    assert.deepEqual(staleOf([entry('l2-cache-oversized', '/machines/0/disks/0'), entry('l2-cache-oversized', '/machines/0/disks/1')], { text }), []);
  });

  it(`${CONTRACT} an entry at a machine's memory (where its cache budget is reported) depends on every disk of the machine`, () => {
    // 8M + 1G of L2 on 4 GiB of RAM is over the 5 % budget; with disk b's size unreadable, or its image
    // unread, the budget cannot be summed, so the entry may still have a finding to accept.
    const machine = (disk: string) => ['machines:', '  - name: m', '    memory: 4G', '    disks:', '      - { name: a, size: 1T, cache: { l2: 8M } }', `      - ${disk}`, ''].join('\n');
    const budget = [entry('machine-cache-budget', '/machines/0/memory')];
    assert.deepEqual(staleOf(budget, { text: machine('{ name: b, size: 4Tx, cache: { l2: 1G } }') }), []);
    assert.deepEqual(staleOf(budget, { text: machine('{ name: b, size: 1G, image: b.qcow2 }') }), []);
    assert.deepEqual(staleOf(budget, { text: machine('{ name: b, size: 1G }') }), [0], 'with every disk known and no finding, it is stale');
  });

  it(`${CONTRACT} an image that was looked up but could not be used leaves its disk undecided`, () => {
    const text = ['machines:', '  - name: m', '    disks:', '      - { name: a, size: 8T, image: a.qcow2, cache: { l2: 1G } }', ''].join('\n');
    const missing: ImageLookup = () => ({ layers: [], problem: { kind: 'missing', message: 'no such file', layer: 0 } });
    assert.deepEqual(staleOf([entry('l2-cache-oversized', '/machines/0/disks/0')], { text, images: missing }), []);
  });

  it(`${CONTRACT} a run given paths cannot tell, and a file that does not parse leaves every entry reaching it undecided`, () => {
    assert.deepEqual(staleOf([entry('l2-cache-undersized', '/machines/0/disks/1')], { complete: false }), []);
    assert.deepEqual(staleOf([entry('l2-cache-undersized', '/machines/0/disks/1')], { text: 'machines: [' }), []);
  });

  it(`${CONTRACT} lint names a stale entry on stderr with its place in the mapping file; the exit status stays`, async () => {
    const dir = makeWorkspace({
      'cachewright.yaml': [
        'version: 1',
        'include: ["*.yaml"]',
        'machines: "$.machines[*]"',
        'disks: "$.disks[*]"',
        'fields:',
        '  machine: { name: "$.name" }',
        '  disk: { name: "$.name", size: "$.size", l2Cache: "$.l2" }',
        'accept:',
        '  - { rule: l2-cache-oversized, pointer: "/machines/0/disks/0", file: fleet.yaml, reason: "room to grow" }',
        '  - { rule: l2-cache-oversized, pointer: "/machines/0/disks/1", file: fleet.yaml, reason: "resized since" }',
        '  - { rule: l2-cache-oversized, pointer: "/machines/0/disks/0", file: gone.yaml, reason: "moved away" }',
        '  - { rule: l2-cache-oversized, pointer: "/machines/0/disks/0", file: old.yml, reason: "no longer included" }',
        '',
      ].join('\n'),
      'fleet.yaml': 'machines:\n  - name: m\n    disks:\n      - { name: a, size: 1T, l2: 256M }\n      - { name: b, size: 1T, l2: 128M }\n',
      'old.yml': 'machines:\n  - name: m\n    disks:\n      - { name: a, size: 1T, l2: 256M }\n',
    });
    try {
      const whole = await lintIn(dir, []);
      assert.equal(whole.code, 0, whole.stderr);
      assert.equal(
        whole.stderr,
        [
          'cachewright.yaml:10:5: accept[1] (l2-cache-oversized at "/machines/0/disks/1" in fleet.yaml) accepts nothing any more: no file the run linted has such a finding there; remove it, or correct its pointer',
          'cachewright.yaml:11:5: accept[2] (l2-cache-oversized at "/machines/0/disks/0" in gone.yaml) accepts nothing any more: there is no such definition file; remove it, or correct its file',
          'cachewright.yaml:12:5: accept[3] (l2-cache-oversized at "/machines/0/disks/0" in old.yml) accepts nothing any more: the mapping file does not include that file; remove it, or correct its file',
          '',
        ].join('\n'),
      );
      const named = await lintIn(dir, ['fleet.yaml']);
      assert.equal(named.stderr, '', 'a run given paths says nothing of the list');
    } finally {
      removeWorkspace(dir);
    }
  });
});
