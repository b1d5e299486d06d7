// backing-chain-cycle: a chain that refers back to itself, either in the images' headers (each
// header's backing file name [SPEC], followed layer by layer) or in the definition's inline chain.
import { SPEC } from '../helpers/sources';
import { ruleTable, type RuleCase } from './harness';
import { GiB, ImageFolder } from './images';

const RULE = 'backing-chain-cycle';
const images = new ImageFolder()
  .image('base.qcow2', { clusterBits: 16, virtualSize: GiB })
  .image('top.qcow2', { clusterBits: 16, virtualSize: GiB, backing: { name: 'base.qcow2', format: 'qcow2' } })
  .image('loop-a.qcow2', { clusterBits: 16, virtualSize: GiB, backing: { name: 'loop-b.qcow2' } })
  .image('loop-b.qcow2', { clusterBits: 16, virtualSize: GiB, backing: { name: 'loop-a.qcow2' } })
  .image('self.qcow2', { clusterBits: 16, virtualSize: GiB, backing: { name: 'self.qcow2' } });

const withImages = (text: string, findings?: RuleCase['findings']): Omit<RuleCase, 'name'> => ({ text, file: images.definition, options: images.options, ...(findings ? { findings } : {}) });
const disk = (fields: string): string => `machines:\n  - name: pier-ci\n    disks:\n      - { name: work, ${fields} }\n`;

ruleTable(RULE, {
  before: () => images.load(),
  after: () => images.remove(),
  valid: [
    { name: `${SPEC} a two-layer chain in the headers`, ...withImages(disk('size: 1G, image: top.qcow2')) },
    { name: 'an inline chain with distinct images', text: 'machines:\n  - disks:\n      - size: 1G\n        image: work.qcow2\n        backing:\n          size: 1G\n          image: golden.qcow2\n' },
    { name: 'an inline chain without image paths', text: 'machines:\n  - disks:\n      - size: 1G\n        backing:\n          size: 1G\n' },
  ],
  invalid: [
    {
      name: `${SPEC} two images whose headers name each other`,
      ...withImages(disk('size: 1G, image: loop-a.qcow2'), [{ rule: RULE, line: 4, column: 40, messageIncludes: ['loop-b.qcow2', 'loop-a.qcow2'] }]),
    },
    {
      name: `${SPEC} an image whose header names itself`,
      ...withImages(disk('size: 1G, image: self.qcow2'), [{ rule: RULE, line: 4, column: 40, messageIncludes: 'self.qcow2' }]),
    },
    {
      name: 'an inline chain that names the same image twice, reported at the second',
      text: 'machines:\n  - disks:\n      - size: 1G\n        image: ci/work.qcow2\n        backing:\n          size: 1G\n          image: ci/work.qcow2\n',
      findings: [{ rule: RULE, line: 7, column: 18, messageIncludes: ['ci/work.qcow2', 'twice'] }],
    },
    {
      name: 'a backing file path that is the disk\'s own image',
      text: disk('size: 1G, image: work.qcow2, backing: work.qcow2'),
      findings: [{ rule: RULE, line: 4, column: 61, messageIncludes: 'own image' }],
    },
  ],
});
