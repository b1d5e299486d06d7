import { count } from './format';
import { declareRule } from './types';

const WORDING = {
  topUnusable: 'the image cannot be used: {problem}; the disk is sized from its definition alone.',
  layerUnusable: 'backing layer {layer} of the image cannot be used: {problem}; layers below it are not counted.',
} as const;

export const imageUnreadable = declareRule({
  id: 'image-unreadable',
  severity: 'error',
  description: 'A referenced image (or one of its backing files) is missing or is not a readable qcow2 image.',
  fixable: false,
  wording: WORDING,
  checkDisk({ image, report }) {
    const problem = image?.facts.problem;
    if (!image || !problem || problem.kind === 'cycle' || problem.kind === 'cancelled') return;
    // Name the file as the definition writes it, not by the absolute path of this machine.
    const message = problem.message.split(image.path).join(image.written.value);
    if (problem.layer === 0) report({ at: image.written, says: 'topUnusable', fill: { problem: message } });
    else report({ at: image.written, says: 'layerUnusable', fill: { layer: count(problem.layer), problem: message } });
  },
});
