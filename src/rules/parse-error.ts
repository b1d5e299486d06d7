import { declareRule } from './types';

/** Reported by the orchestrator when a definition file is not valid YAML or JSON. */
export const parseError = declareRule({
  id: 'parse-error',
  severity: 'error',
  description: 'The definition file is not valid YAML or JSON, so none of its disks can be checked.',
  fixable: false,
  wording: {
    /** The reader's own account of what it could not read, with the place in the finding's range. */
    unreadable: '{problem}',
    tooLarge: '{file} is {size} ({bytes} bytes), above the size limit of {limit} for definition files, so it is not linted; {raise}',
  },
});
