// image-unreadable: a named image (or a backing layer) is missing or not a readable qcow2 image: the
// header starts with the magic "QFI\xfb" and a version of 2 or 3 [SPEC].
import { strict as assert } from 'node:assert';
import { SPEC } from '../helpers/sources';
import { findingsOf, lintCase, ruleTable, type RuleCase } from './harness';
import { GiB, ImageFolder } from './images';

const RULE = 'image-unreadable';
const images = new ImageFolder()
  .image('good.qcow2', { clusterBits: 16, virtualSize: GiB })
  .image('overlay.qcow2', { clusterBits: 16, virtualSize: GiB, backing: { name: 'gone.qcow2' } })
  .file('notes.qcow2', 'plain text, not an image')
  .file('short.qcow2', new Uint8Array([0x51, 0x46, 0x49, 0xfb, 0, 0]));

const disk = (fields: string): string => `machines:\n  - name: pier-db\n    disks:\n      - { name: data, ${fields} }\n`;
const at = (text: string, findings?: RuleCase['findings']): Omit<RuleCase, 'name'> => ({ text, file: images.definition, options: images.options, ...(findings ? { findings } : {}) });

ruleTable(RULE, {
  before: () => images.load(['missing.qcow2', 'sub/missing.qcow2']),
  after: () => images.remove(),
  valid: [
    { name: `${SPEC} a version 3 image with its magic`, ...at(disk('size: 1G, image: good.qcow2')) },
    { name: 'no image named', ...at(disk('size: 1G')) },
    { name: 'a raw disk\'s image is not read as qcow2', ...at(disk('size: 1G, format: raw, image: notes.qcow2')) },
  ],
  invalid: [
    {
      name: 'a missing file, reported at the image path',
      ...at(disk('size: 1G, image: missing.qcow2'), [{ rule: RULE, line: 4, column: 40, messageIncludes: ['missing.qcow2', 'sized from its definition alone'] }]),
    },
    {
      name: `${SPEC} a file without the qcow2 magic`,
      ...at(disk('size: 1G, image: notes.qcow2'), [{ rule: RULE, line: 4, column: 40, messageIncludes: ['not a qcow2 image', 'QFI'] }]),
    },
    {
      name: `${SPEC} a file too short for a header`,
      ...at(disk('size: 1G, image: short.qcow2'), [{ rule: RULE, line: 4, column: 40 }]),
    },
    {
      name: `${SPEC} a backing file the overlay's header names is missing`,
      ...at(disk('size: 1G, image: overlay.qcow2'), [{ rule: RULE, line: 4, column: 40, messageIncludes: ['backing layer 1', 'gone.qcow2', 'layers below it are not counted'] }]),
    },
  ],
});

describe(`rule ${RULE}: the disk is still checked`, () => {
  before(() => images.load(['missing.qcow2']));
  it('from its definition: a 1 TiB disk with a missing image still gets l2-cache-undersized', () => {
    const report = lintCase(at(disk('size: 1T, image: missing.qcow2')));
    assert.equal(findingsOf(report, RULE).length, 1);
    assert.equal(findingsOf(report, 'l2-cache-undersized').length, 1);
  });
});
