/** Starts the activation probe's one line of results in the editor's relayed console (kept apart from the probe, which needs the editor's module). */
export const PROBE_MARK = 'cachewright-activation-probe';
