import { docsPage, type Rule } from './types';

export const imageUnreadable: Rule<'image-unreadable'> = {
  id: 'image-unreadable',
  severity: 'error',
  description: 'A referenced image (or one of its backing files) is missing or is not a readable qcow2 image.',
  fixable: false,
  docs: docsPage('image-unreadable'),
  checkDisk({ image, report }) {
    const problem = image?.facts.problem;
    if (!image || !problem || problem.kind === 'cycle' || problem.kind === 'cancelled') return;
    const layer = problem.layer === 0 ? 'the image' : `backing layer ${problem.layer} of the image`;
    // Name the file as the definition writes it, not by the absolute path of this machine.
    const message = problem.message.split(image.path).join(image.written.value);
    report({
      at: image.written,
      message: `${layer} cannot be used: ${message}${problem.layer === 0 ? '; the disk is sized from its definition alone' : '; layers below it are not counted'}.`,
    });
  },
};
