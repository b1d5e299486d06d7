import { declareRule } from './types';

export const backingChainCycle = declareRule({
  id: 'backing-chain-cycle',
  severity: 'error',
  description: 'A backing chain refers back to itself, so the image can never be opened.',
  fixable: false,
  wording: {
    fileLoop: 'the backing chain {chain} comes back to a file it already passed: {problem}.',
    namedTwice: 'the backing chain described here names {file} twice: a chain that refers back to itself can never be opened.',
    ownImage: "the backing file {file} is the disk's own image (or one above it): a chain that refers back to itself can never be opened.",
  },
  checkDisk({ disk, image, report }) {
    const problem = image?.facts.problem;
    if (image && problem?.kind === 'cycle') {
      const names = image.facts.layers.slice(0, problem.layer + 1).map((l) => l.name ?? l.path);
      report({ at: image.written, says: 'fileLoop', fill: { chain: names.join(' -> '), problem: problem.message } });
      return;
    }
    // A chain described inline in the definition can loop through one file too.
    const seen = new Set<string>();
    let current: typeof disk | undefined = disk;
    while (current) {
      const file = current.values.image?.value;
      if (file !== undefined) {
        if (seen.has(file)) {
          report({ at: current.values.image, says: 'namedTwice', fill: { file } });
          return;
        }
        seen.add(file);
      }
      const backing: typeof disk.backing = current.backing;
      if (backing && 'file' in backing) {
        if (seen.has(backing.file.value)) report({ at: backing.file, says: 'ownImage', fill: { file: backing.file.value } });
        return;
      }
      current = backing?.disk;
    }
  },
});
