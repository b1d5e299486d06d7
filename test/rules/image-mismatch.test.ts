// image-mismatch: the definition disagrees with the qcow2 header of the image it names. The header
// fields compared are the [SPEC] ones: cluster_bits, the virtual size, incompatible feature bit 4
// (extended L2) and the backing file name. The images are real files from the spec-built writer.
import { strict as assert } from 'node:assert';
import { SPEC } from '../helpers/sources';
import { findingsOf, lintCase, ruleTable, type RuleCase } from './harness';
import { GiB, ImageFolder, TiB } from './images';

const RULE = 'image-mismatch';
const images = new ImageFolder()
  .image('orders.qcow2', { clusterBits: 20, virtualSize: TiB })
  .image('golden.qcow2', { clusterBits: 16, virtualSize: 20n * GiB })
  .image('overlay.qcow2', { clusterBits: 16, virtualSize: 20n * GiB, backing: { name: 'golden.qcow2', format: 'qcow2' } })
  .image('sub.qcow2', { clusterBits: 16, virtualSize: GiB, extendedL2: true });

const disk = (fields: string): string => `machines:\n  - name: pier-db\n    disks:\n      - { name: data, ${fields} }\n`;
const at = (text: string, findings?: RuleCase['findings']): Omit<RuleCase, 'name'> => ({ text, file: images.definition, options: images.options, ...(findings ? { findings } : {}) });

ruleTable(RULE, {
  before: () => images.load(),
  after: () => images.remove(),
  valid: [
    { name: `${SPEC} size and cluster size as in the header (1 TiB, cluster_bits 20)`, ...at(disk('size: 1T, cluster: 1M, image: orders.qcow2')) },
    { name: `${SPEC} the backing file named as in the overlay's header`, ...at(disk('size: 20G, image: overlay.qcow2, backing: golden.qcow2')) },
    { name: `${SPEC} extended L2 on, as incompatible bit 4 says`, ...at(disk('size: 1G, image: sub.qcow2, extendedL2: true')) },
    { name: 'values the definition leaves out are taken from the image, not compared', ...at(disk('image: orders.qcow2')) },
    { name: 'without image facts (the caller read no images) nothing is compared', text: disk('size: 2T, image: orders.qcow2'), file: images.definition },
    { name: 'a raw disk is not compared', ...at(disk('size: 2T, format: raw, image: orders.qcow2')) },
  ],
  invalid: [
    {
      name: `${SPEC} cluster size: 64 KiB written, cluster_bits 20 (1 MiB) in the header`,
      ...at(disk('size: 1T, cluster: 64K, image: orders.qcow2'), [{ rule: RULE, line: 4, column: 42, messageIncludes: ['64 KiB', 'orders.qcow2', '1 MiB', 'sizing uses the image'] }]),
    },
    {
      name: `${SPEC} virtual size: 2 TiB written, 1 TiB in the header (with the exact bytes)`,
      ...at(disk('size: 2T, image: orders.qcow2'), [{ rule: RULE, line: 4, column: 29, messageIncludes: ['2 TiB', '1 TiB', '1099511627776 bytes'] }]),
    },
    {
      name: `${SPEC} extended L2: off written, incompatible bit 4 set`,
      ...at(disk('size: 1G, image: sub.qcow2, extendedL2: false'), [{ rule: RULE, line: 4, column: 63, messageIncludes: ['extended L2 is off', 'uses extended L2'] }]),
    },
    {
      name: `${SPEC} extended L2: on written, incompatible bit 4 clear`,
      ...at(disk('size: 1T, image: orders.qcow2, extendedL2: true'), [{ rule: RULE, line: 4, column: 66, messageIncludes: ['extended L2 is on', 'does not use extended L2'] }]),
    },
    {
      name: `${SPEC} backing file: another name than the overlay's header`,
      ...at(disk('size: 20G, image: overlay.qcow2, backing: other.qcow2'), [{ rule: RULE, line: 4, column: 65, messageIncludes: ['other.qcow2', 'golden.qcow2'] }]),
    },
    {
      name: `${SPEC} backing file: named in the definition, absent from the header`,
      ...at(disk('size: 20G, image: golden.qcow2, backing: base.qcow2'), [{ rule: RULE, line: 4, column: 64, messageIncludes: ['has no backing file'] }]),
    },
    {
      name: 'several disagreements on one disk: one finding each, in text order',
      ...at(disk('size: 2T, cluster: 64K, image: orders.qcow2'), [{ rule: RULE, line: 4, column: 29 }, { rule: RULE, line: 4, column: 42 }]),
    },
  ],
});

describe(`rule ${RULE}: what sizing uses`, () => {
  before(() => images.load());
  it(`${SPEC} the disk is sized from the header: 1 TiB at 1 MiB clusters needs 8 MiB of L2 cache`, () => {
    const report = lintCase(at(disk('size: 1T, cluster: 64K, image: orders.qcow2')));
    assert.equal(report.disks[0]?.sizing.clusterSize, 1n << 20n);
    assert.equal(report.disks[0]?.sizing.l2FullCoverage, 8n << 20n);
    assert.equal(findingsOf(report, RULE)[0]?.fix, undefined, 'whether the definition or the image is wrong is the owner\'s call');
  });
});
