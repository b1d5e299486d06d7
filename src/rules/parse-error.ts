import { docsPage, type Rule } from './types';

/** Reported by the orchestrator when a definition file is not valid YAML or JSON. */
export const parseError: Rule<'parse-error'> = {
  id: 'parse-error',
  severity: 'error',
  description: 'The definition file is not valid YAML or JSON, so none of its disks can be checked.',
  fixable: false,
  docs: docsPage('parse-error'),
};
