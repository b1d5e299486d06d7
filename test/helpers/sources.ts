// The outside references the unit tests check the engine against (docs/sources.md "Sources"). Every test
// title starts with one of these so a reader sees where the expected value comes from.
export const SPEC = '[SPEC qcow2 format specification v3]';
export const CACHE = '[CACHE reference implementation cache notes]';
export const IEC = '[IEC 80000-13]';
export const RFC8259 = '[RFC 8259 JSON]';
export const COMMON = '[common practice]';
export const CONTRACT = '[public contract: docs/cli.md, docs/mapping-file.md]';
export const MATTSON = '[MATTSON: Mattson et al., IBM Systems Journal 9(2), 1970]';
export const SHARDS = '[SHARDS: Waldspurger et al., USENIX FAST 2015]';
export const IRM = '[IRM: Coffman & Denning, Operating Systems Theory, 1973]';
export const CHE = '[CHE: Che et al., IEEE JSAC 20(7), 2002]';
export const LRU_CACHE = '[lru-cache from npm, a general-purpose LRU]';
export const IO_TESTER = '[I/O logs written by Debian\'s flexible I/O tester 3.33]';
export const BLOCK_TRACE_MANUAL = '[block-layer trace dumper manual page, DEFAULT OUTPUT and RWBS]';
export const NODE_UTIL = '[node:util isDeepStrictEqual, the platform\'s own structural comparison]';
