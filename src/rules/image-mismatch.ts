import * as nodePath from 'node:path';
import { size } from './format';
import { docsPage, type FindingInput, type Rule } from './types';

export const imageMismatch: Rule<'image-mismatch'> = {
  id: 'image-mismatch',
  severity: 'error',
  description: 'The image file disagrees with the definition (cluster size, virtual size, extended L2 or backing file).',
  fixable: false,
  docs: docsPage('image-mismatch'),
  checkDisk({ disk, image, report }) {
    const top = image?.facts.layers[0];
    if (!image || !top || image.facts.problem?.layer === 0 || top.format !== 'qcow2') return;
    const file = nodePath.basename(image.path);
    const v = disk.values;
    const found: FindingInput[] = [];
    if (v.size && top.virtualSize !== undefined && v.size.value !== top.virtualSize) {
      found.push({ at: 'size', message: `the definition says ${size(v.size.value)} but ${file} is ${size(top.virtualSize)} (${top.virtualSize} bytes); sizing uses the image.` });
    }
    if (v.clusterSize && top.clusterSize !== undefined && v.clusterSize.value !== top.clusterSize) {
      found.push({ at: 'clusterSize', message: `the definition says ${size(v.clusterSize.value)} clusters but ${file} has ${size(top.clusterSize)} clusters; sizing uses the image.` });
    }
    if (v.extendedL2 && top.extendedL2 !== undefined && v.extendedL2.value !== top.extendedL2) {
      found.push({ at: 'extendedL2', message: `the definition says extended L2 is ${v.extendedL2.value ? 'on' : 'off'} but ${file} ${top.extendedL2 ? 'uses' : 'does not use'} extended L2 entries.` });
    }
    const backing = disk.backing;
    if (backing && 'file' in backing) {
      // Paths in a definition are relative to the definition file; in a header, to the image's folder.
      const declared = nodePath.resolve(image.definitionDir, backing.file.value);
      const actual = image.facts.layers[1]?.path;
      if (top.backingName === null || top.backingName === undefined) {
        found.push({ at: backing.file, message: `the definition names backing file ${backing.file.value} but ${file} has no backing file.` });
      } else if (actual !== undefined && nodePath.resolve(actual) !== declared && backing.file.value !== top.backingName) {
        found.push({ at: backing.file, message: `the definition names backing file ${backing.file.value} but ${file} is backed by ${top.backingName}.` });
      }
    }
    // No fix: whether the definition or the image is wrong is the owner's call.
    for (const finding of found) report(finding);
  },
};
