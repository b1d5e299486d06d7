import { docsPage, type Rule } from './types';

/** Reported by the orchestrator from the problems found while reading values; it has no hook. */
export const invalidValue: Rule<'invalid-value'> = {
  id: 'invalid-value',
  severity: 'error',
  description: 'A size, interval or flag cannot be read, or is out of range.',
  fixable: false,
  docs: docsPage('invalid-value'),
};
