/** Printed by the suite as it starts, so the launcher can tell mocha's report from the workbench's chatter. */
export const SUITE_START_MARK = '--- cachewright integration suite ---';
