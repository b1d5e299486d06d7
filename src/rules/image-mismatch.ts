import * as nodePath from 'node:path';
import { exactBytes, size } from './format';
import { declareRule, type FindingInput } from './types';

const WORDING = {
  sizeDiffers: 'the definition says {declared} but {file} is {actual} ({bytes} bytes); sizing uses the image.',
  clusterDiffers: 'the definition says {declared} clusters but {file} has {actual} clusters; sizing uses the image.',
  extendedL2NotUsed: 'the definition says extended L2 is on but {file} does not use extended L2 entries.',
  extendedL2Used: 'the definition says extended L2 is off but {file} uses extended L2 entries.',
  noBacking: 'the definition names backing file {backing} but {file} has no backing file.',
  otherBacking: 'the definition names backing file {backing} but {file} is backed by {actual}.',
} as const;

export const imageMismatch = declareRule({
  id: 'image-mismatch',
  severity: 'error',
  description: 'The image file disagrees with the definition (cluster size, virtual size, extended L2 or backing file).',
  fixable: false,
  wording: WORDING,
  checkDisk({ disk, image, report }) {
    const top = image?.facts.layers[0];
    if (!image || !top || image.facts.problem?.layer === 0 || top.format !== 'qcow2') return;
    const file = nodePath.basename(image.path);
    const v = disk.values;
    const found: FindingInput<typeof WORDING>[] = [];
    if (v.size && top.virtualSize !== undefined && v.size.value !== top.virtualSize) {
      found.push({ at: 'size', says: 'sizeDiffers', fill: { declared: size(v.size.value), file, actual: size(top.virtualSize), bytes: exactBytes(top.virtualSize) } });
    }
    if (v.clusterSize && top.clusterSize !== undefined && v.clusterSize.value !== top.clusterSize) {
      found.push({ at: 'clusterSize', says: 'clusterDiffers', fill: { declared: size(v.clusterSize.value), file, actual: size(top.clusterSize) } });
    }
    if (v.extendedL2 && top.extendedL2 !== undefined && v.extendedL2.value !== top.extendedL2) {
      found.push({ at: 'extendedL2', says: v.extendedL2.value ? 'extendedL2NotUsed' : 'extendedL2Used', fill: { file } });
    }
    const backing = disk.backing;
    if (backing && 'file' in backing) {
      // Paths in a definition are relative to the definition file; in a header, to the image's folder.
      const declared = nodePath.resolve(image.definitionDir, backing.file.value);
      const actual = image.facts.layers[1]?.path;
      if (top.backingName === null || top.backingName === undefined) {
        found.push({ at: backing.file, says: 'noBacking', fill: { backing: backing.file.value, file } });
      } else if (actual !== undefined && nodePath.resolve(actual) !== declared && backing.file.value !== top.backingName) {
        found.push({ at: backing.file, says: 'otherBacking', fill: { backing: backing.file.value, file, actual: top.backingName } });
      }
    }
    // No fix: whether the definition or the image is wrong is the owner's call.
    for (const finding of found) report(finding);
  },
});
