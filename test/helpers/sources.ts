// The outside references the unit tests check the engine against (FACTS.md "Sources"). Every test
// title starts with one of these so a reader sees where the expected value comes from.
export const SPEC = '[SPEC qcow2 format specification v3]';
export const CACHE = '[CACHE reference implementation cache notes]';
export const IEC = '[IEC 80000-13]';
export const RFC8259 = '[RFC 8259 JSON]';
export const COMMON = '[common practice]';
export const CONTRACT = '[CONTRACTS.md]';
