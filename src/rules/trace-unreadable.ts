import { CAUTIONS } from '../core/cautions';
import { declareRule } from './types';

export const traceUnreadable = declareRule({
  id: 'trace-unreadable',
  severity: 'warning',
  description: 'An I/O trace the disk names is missing, unreadable or holds no usable request, so the disk is judged by its assumed access pattern.',
  fixable: false,
  wording: {
    unusable: 'the trace cannot be used: {problem}. The disk is judged by the assumed {pattern} pattern instead.',
  },
  checkDisk({ trace, pattern, report }) {
    const problem = trace?.facts.problem;
    if (!trace || !problem) return;
    // Name the file as the definition writes it, not by the absolute path of this machine.
    let message = problem.message;
    trace.paths.forEach((path, i) => (message = message.split(path).join(trace.written.value[i] ?? path)));
    report({ at: trace.written, says: 'unusable', fill: { problem: message, pattern } });
  },
});

/** The caution every message built on a measured trace carries (docs/sources.md). */
export const TRACE_CAUTION = CAUTIONS.tracePeriod;
