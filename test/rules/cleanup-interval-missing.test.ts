// cleanup-interval-missing: idle cleanup frees cache entries not used for an interval; it matters
// when the cache is larger than the driver default or a backing chain keeps entries for regions the
// overlay took over ([CACHE] defaults by generation: current cleans every 600 s on Linux, off
// elsewhere; legacy never cleans).
import { strict as assert } from 'node:assert';
import { CACHE } from '../helpers/sources';
import { findingsOf, lintCase, oneDisk, roundTrip, ruleTable } from './harness';

const RULE = 'cleanup-interval-missing';
const legacy = { assume: { driver: 'legacy' } };

ruleTable(RULE, {
  valid: [
    { name: `${CACHE} current driver on Linux: cleanup runs every 600 s by default`, text: oneDisk('size: 1T\ncache: { l2: 128M }') },
    { name: `${CACHE} legacy driver at its default cache: nothing extra to free`, text: oneDisk('size: 64G'), mapping: legacy },
    { name: `${CACHE} legacy driver with a larger cache and an interval set`, text: oneDisk('size: 64G\ncache: { l2: 8M, cleanup: 600 }'), mapping: legacy },
    { name: `${CACHE} legacy driver with a cache at its 1 MiB default`, text: oneDisk('size: 64G\ncache: { l2: 1M }'), mapping: legacy },
    { name: 'a backing chain with cleanup on (10m)', text: oneDisk('size: 100G\ncache: { cleanup: 10m }\nbacking: { size: 100G }') },
    { name: `${CACHE} current driver, cleanup off, cache within the default`, text: oneDisk('size: 20G\ncache: { l2: 2.5M, cleanup: 0 }') },
  ],
  invalid: [
    {
      name: `${CACHE} legacy driver with 8 MiB of L2 cache and no interval: reported at the disk`,
      text: oneDisk('size: 64G\ncache: { l2: 8M }'),
      mapping: legacy,
      findings: [{ rule: RULE, line: 4, column: 9, messageIncludes: ['legacy driver default is off', '8 MiB', '1 MiB', '10m'] }],
    },
    {
      name: `${CACHE} current driver with cleanup set to 0 and a cache above the 32 MiB default: reported at the 0`,
      text: oneDisk('size: 1T\ncache:\n  l2: 128M\n  cleanup: 0'),
      findings: [{ rule: RULE, line: 8, column: 20, messageIncludes: ['set to 0 (off)', '128 MiB', '32 MiB'] }],
    },
    {
      name: `${CACHE} a backing chain with cleanup off keeps the backing layer's caches`,
      text: oneDisk('size: 100G\ncache: { cleanup: 0 }\nbacking: { name: golden, size: 100G }'),
      findings: [{ rule: RULE, line: 6, column: 27, messageIncludes: ['1 backing layer keeps'] }],
    },
    {
      name: `${CACHE} a non-Linux host has cleanup off by default: a backing file named by path is a layer too`,
      text: oneDisk('size: 100G\nbacking: base.qcow2'),
      mapping: { assume: { platform: 'other' } },
      findings: [{ rule: RULE, line: 4, column: 9, messageIncludes: ['current driver default is off', 'backing layer'] }],
    },
    {
      name: `${CACHE} legacy driver, 16 MiB of L2 (12.5 MiB used: full coverage of 100 GiB) above its 1 MiB default and two backing layers: both reasons, joined`,
      text: oneDisk('size: 100G\ncache: { l2: 16M }\nbacking: { name: mid, size: 100G, backing: { name: golden, size: 100G } }'),
      mapping: legacy,
      findings: [{ rule: RULE, line: 4, column: 9, messageIncludes: ['the L2 cache of 12.5 MiB is above the driver default of 1 MiB, and 2 backing layers keep caches of'] }],
    },
  ],
  fix: { name: 'YAML: the interval is inserted into the existing cache map', text: oneDisk('size: 64G\ncache:\n  l2: 8M   # raised for the index\nformat: qcow2'), mapping: legacy },
});

describe(`rule ${RULE}: fix values`, () => {
  it(`${CACHE} a 0 is replaced by 600`, () => {
    const fixed = roundTrip(RULE, { name: 'replace', text: oneDisk('size: 1T\ncache:\n  l2: 128M\n  cleanup: 0') });
    assert.ok(fixed.includes('  cleanup: 600\n'), fixed);
  });
  it('JSON: a missing parent map is created in the file\'s indentation', () => {
    const text = '{\n  "machines": [\n    {\n      "name": "m",\n      "disks": [\n        {\n          "name": "d",\n          "size": "100G",\n          "backing": "base.qcow2"\n        }\n      ]\n    }\n  ]\n}\n';
    const fixed = roundTrip(RULE, { name: 'json', text, mapping: { assume: { platform: 'other' } } });
    assert.ok(fixed.includes('"backing": "base.qcow2",\n          "cache": {\n            "cleanup": 600\n          }\n        }'), fixed);
    assert.doesNotThrow(() => JSON.parse(fixed));
  });
  it('the fix title names the interval', () => {
    const finding = findingsOf(lintCase({ text: oneDisk('size: 64G\ncache: { l2: 8M }'), mapping: legacy }), RULE)[0];
    assert.match(finding?.fix?.title ?? '', /every 10m/);
  });
});
