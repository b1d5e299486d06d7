// The one seeded generator of the tests, benchmarks and demo scripts: mulberry32, a small, well-known
// 32-bit generator (public domain), uniform in [0, 1). Seeded, so a generated trace or case list is
// the same on every run. Plain CommonJS so both the TypeScript tests and the .mjs scripts load it.
'use strict';

/** @param {number} seed @returns {() => number} */
function mulberry32(seed) {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

exports.mulberry32 = mulberry32;
