import { declareRule } from './types';

/** Reported by the orchestrator for a suppression comment it cannot honour. */
export const invalidSuppression = declareRule({
  id: 'invalid-suppression',
  severity: 'warning',
  description: 'An accept comment names no rule, an unknown rule, or gives no reason, stands above no disk, machine or value, or accepts nothing any more.',
  fixable: false,
  wording: {
    noRule: 'this accept comment names no rule; write "# cachewright-accept RULE: REASON"',
    unknownRule: 'this accept comment names unknown rule {rules}',
    unknownRules: 'this accept comment names unknown rules {rules}',
    noReason: 'this accept comment for {rules} gives no reason; write "# cachewright-accept {rules}: REASON"',
    notAbove: 'this accept comment is not above a disk, a machine or a value, so it accepts nothing',
    acceptsNothing: 'this accept comment for {rules} accepts nothing: the disk, machine or value it is written for has no such finding any more; remove the comment, or move it to where the finding now is',
    removeComment: 'Remove this accept comment',
  },
});
