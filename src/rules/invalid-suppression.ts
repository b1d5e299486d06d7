import { docsPage, type Rule } from './types';

/** Reported by the orchestrator for a suppression comment it cannot honour. */
export const invalidSuppression: Rule<'invalid-suppression'> = {
  id: 'invalid-suppression',
  severity: 'warning',
  description: 'An accept comment names no rule, an unknown rule, or gives no reason.',
  fixable: false,
  docs: docsPage('invalid-suppression'),
};
