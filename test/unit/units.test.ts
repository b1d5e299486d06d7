// Sizes and intervals (docs/mapping-file.md) against IEC 80000-13's prefixes and exact decimal arithmetic.
import { strict as assert } from 'node:assert';
import fc from 'fast-check';
import { formatCount, formatInterval, formatShare, formatSize } from '../../src/core/format';
import { formatSizeExact, parseInterval, parseSize, sizeStyleOf, type SizeStyle } from '../../src/core/units';
import { assertErrorMentions, errorOf, valueOf } from '../helpers/outcome';
import { COMMON, CONTRACT, IEC } from '../helpers/sources';

const Ki = 1024n;
const Mi = Ki ** 2n;
const Gi = Ki ** 3n;
const Ti = Ki ** 4n;
const Pi = Ki ** 5n;

describe('units: parseSize', () => {
  describe(`${IEC} binary prefixes K, Ki, KiB .. P are powers of 1024`, () => {
    const binary: [string, bigint][] = [
      ['1K', Ki], ['1Ki', Ki], ['1KiB', Ki],
      ['1M', Mi], ['1Mi', Mi], ['1MiB', Mi],
      ['1G', Gi], ['1Gi', Gi], ['1GiB', Gi],
      ['1T', Ti], ['1Ti', Ti], ['1TiB', Ti],
      ['1P', Pi], ['1Pi', Pi], ['1PiB', Pi],
      ['64K', 65536n], ['64KiB', 65536n], ['64 KiB', 65536n], ['1 GiB', Gi], ['512GiB', 512n * Gi],
    ];
    for (const [text, bytes] of binary) {
      it(`"${text}" = ${bytes}`, () => assert.equal(valueOf(parseSize(text)), bytes));
    }
  });

  describe(`${IEC} SI prefixes kB, MB, GB, TB, PB are powers of 1000`, () => {
    const decimal: [string, bigint][] = [
      ['1kB', 1000n], ['1MB', 10n ** 6n], ['1GB', 10n ** 9n], ['1TB', 10n ** 12n], ['1PB', 10n ** 15n],
      ['1 GB', 10n ** 9n], ['2.5MB', 2_500_000n],
    ];
    for (const [text, bytes] of decimal) {
      it(`"${text}" = ${bytes}`, () => assert.equal(valueOf(parseSize(text)), bytes));
    }
  });

  describe(`${CONTRACT} plain numbers are bytes`, () => {
    it('the number 512 and the strings "512", "512B" are 512 bytes', () => {
      assert.equal(valueOf(parseSize(512)), 512n);
      assert.equal(valueOf(parseSize('512')), 512n);
      assert.equal(valueOf(parseSize('512B')), 512n);
      assert.equal(valueOf(parseSize(0)), 0n);
    });
    it('a bigint is taken as bytes', () => assert.equal(valueOf(parseSize(2n ** 61n)), 2n ** 61n));
    it('surrounding whitespace is ignored', () => assert.equal(valueOf(parseSize('  64K ')), 65536n));
  });

  describe(`${IEC} decimal fractions with binary prefixes are exact`, () => {
    it('"2.5M" = 2621440 exactly (2.5 * 2^20)', () => assert.equal(valueOf(parseSize('2.5M')), 2_621_440n));
    it('"1.5T" = 1.5 * 2^40', () => assert.equal(valueOf(parseSize('1.5T')), 3n * Ti / 2n));
    it('"0.5K" = 512', () => assert.equal(valueOf(parseSize('0.5K')), 512n));
    it('"0.001953125M" = 2048 (long fraction, still exact)', () => assert.equal(valueOf(parseSize('0.001953125M')), 2048n));
    it('"1.25P" = 1.25 * 2^50, beyond 2^53 without float rounding', () => {
      assert.equal(valueOf(parseSize('1.25P')), 5n * Pi / 4n);
    });
    it('"2048P" = 2^61 exactly', () => assert.equal(valueOf(parseSize('2048P')), 2n ** 61n));
  });

  describe('bad sizes are errors that name the value', () => {
    it(`${COMMON} a fraction of a byte: "1.5", 0.5, "0.3K" (307.2 B)`, () => {
      assertErrorMentions(parseSize('1.5'), '"1.5"', 'whole number of bytes');
      assertErrorMentions(parseSize(0.5), '0.5', 'whole number of bytes');
      assertErrorMentions(parseSize('0.3K'), '"0.3K"', 'whole number of bytes');
    });
    it(`${COMMON} negative sizes: "-5G", -1, -1n`, () => {
      assertErrorMentions(parseSize('-5G'), '"-5G"', 'negative');
      assertErrorMentions(parseSize(-1), '-1', 'negative');
      assertErrorMentions(parseSize(-1n), '-1', 'negative');
    });
    it(`${IEC} unknown units name the unit and list the allowed ones`, () => {
      assertErrorMentions(parseSize('20X'), '"20X"', 'unknown unit "X"', 'K, M, G, T, P', 'kB, MB, GB, TB');
      assertErrorMentions(parseSize('1ZiB'), '"1ZiB"', 'unknown unit "ZiB"');
      assertErrorMentions(parseSize('3 bananas'), '"3 bananas"', 'unknown unit');
    });
    it(`${IEC} lower-case binary letters are refused with a hint`, () => {
      assertErrorMentions(parseSize('64k'), '"64k"', 'did you mean K?');
      assertErrorMentions(parseSize('1gib'), '"1gib"', 'unknown unit');
    });
    it(`${IEC} "KB" is ambiguous (neither kB nor KiB) and is refused`, () => {
      assertErrorMentions(parseSize('4KB'), '"4KB"', 'ambiguous', 'KiB', 'kB');
    });
    it('not a size at all', () => {
      assertErrorMentions(parseSize(''), 'not a size');
      assertErrorMentions(parseSize('big'), '"big"', 'not a size');
      assertErrorMentions(parseSize('1e3'), '"1e3"');
      assertErrorMentions(parseSize(null), 'null');
      assertErrorMentions(parseSize(true), 'boolean');
      assertErrorMentions(parseSize([1]), 'a list');
      assertErrorMentions(parseSize({ size: 1 }), 'a map');
      assertErrorMentions(parseSize(Number.NaN), 'NaN');
      assertErrorMentions(parseSize(Number.POSITIVE_INFINITY), 'Infinity');
    });
    it('a JSON number beyond 2^53 is refused rather than silently rounded', () => {
      assertErrorMentions(parseSize(2 ** 61), 'too large to be read exactly');
    });
  });

  it('"1.5kB" is 1500 bytes: a whole number, so accepted', () => assert.equal(valueOf(parseSize('1.5kB')), 1500n));
});

describe('units: parseInterval', () => {
  const intervals: [unknown, number][] = [
    [90, 90], ['90', 90], ['90s', 90], ['10m', 600], ['1h', 3600], [0, 0], ['0', 0], ['1.5m', 90], ['0.5h', 1800], [' 600 s ', 600],
  ];
  for (const [input, seconds] of intervals) {
    it(`${CONTRACT} ${JSON.stringify(input)} = ${seconds} s`, () => assert.equal(valueOf(parseInterval(input)), seconds));
  }
  it('bad intervals are errors naming the value', () => {
    assertErrorMentions(parseInterval('-5'), '"-5"', 'not an interval', 's, m or h');
    assertErrorMentions(parseInterval(-5), '-5', 'not an interval');
    assertErrorMentions(parseInterval('10d'), '"10d"', 's, m or h');
    assertErrorMentions(parseInterval('1.5'), '"1.5"', 'whole number of seconds');
    assertErrorMentions(parseInterval(1.5), '1.5', 'whole number of seconds');
    assertErrorMentions(parseInterval(true), 'boolean');
  });
  it('formatInterval writes seconds, minutes, hours and "off" for 0', () => {
    assert.equal(formatInterval(0), '0 (off)');
    // Written the way parseInterval reads them back.
    assert.equal(formatInterval(600), '10m');
    assert.equal(formatInterval(3600), '1h');
    assert.equal(formatInterval(90), '90s');
    for (const seconds of [600, 3600, 90]) assert.deepEqual(parseInterval(formatInterval(seconds)), { ok: true, value: seconds });
  });
});

describe('units: formatSize (for people)', () => {
  const cases: [bigint, string][] = [
    [0n, '0 B'], [512n, '512 B'], [1023n, '1023 B'], [Ki, '1 KiB'], [1536n, '1.5 KiB'],
    [192n * Ki, '192 KiB'], [2_621_440n, '2.5 MiB'], [2_883_584n, '2.75 MiB'], [20n * Gi, '20 GiB'],
    [Ti, '1 TiB'], [Pi, '1 PiB'], [2n ** 61n, '2 EiB'],
  ];
  for (const [bytes, text] of cases) {
    it(`${IEC} ${bytes} -> "${text}"`, () => assert.equal(formatSize(bytes), text));
  }
  it('marks an inexact two-decimal value with "~"', () => {
    assert.equal(formatSize(1025n), '~1 KiB');
    assert.equal(formatSize(Ki + Ki / 3n), '~1.33 KiB');
  });
});

describe('units: thousands separators (for people)', () => {
  // The formatter groups digits itself (the platform's Intl call was the costliest part of a
  // message); the reference is that Intl call, ECMA-402 NumberFormat for en-US.
  const ECMA402 = "[ECMA-402 Intl.NumberFormat, en-US, the platform's own]";
  it(`${ECMA402} property: formatCount writes every integer as toLocaleString('en-US') does`, () => {
    let ran = 0;
    fc.assert(fc.property(fc.oneof(fc.integer(), fc.maxSafeInteger(), fc.constantFrom(0, -0, 999, 1000, -1000, 1e21, 0.5)), (n) => {
      ran++;
      assert.equal(formatCount(n), n.toLocaleString('en-US'));
    }), { numRuns: 2000 });
    assert.equal(ran, 2000);
  });
  it(`${ECMA402} a share above 1,000 % groups its whole part the same way`, () => {
    assert.equal(formatShare(12345.678), `${(1234567).toLocaleString('en-US')}.8 %`);
  });
});

describe('units: formatSizeExact and sizeStyleOf', () => {
  const letter: SizeStyle = { kind: 'letter', space: false };
  const styles: SizeStyle[] = [
    letter, { kind: 'letter', space: true }, { kind: 'iec', space: false }, { kind: 'iec', space: true },
    { kind: 'iecB', space: false }, { kind: 'iecB', space: true }, { kind: 'bytes', space: false },
  ];

  it(`${IEC} picks the largest binary unit that divides exactly`, () => {
    assert.equal(formatSizeExact(65536n), '64K');
    assert.equal(formatSizeExact(2_621_440n), '2560K');
    assert.equal(formatSizeExact(512n), '512');
    assert.equal(formatSizeExact(0n), '0');
    assert.equal(formatSizeExact(2n ** 61n), '2E'); // Ei = 2^60 [IEC]
    assert.equal(formatSizeExact(Gi + 1n), String(Gi + 1n));
  });
  it('writes the style a file uses', () => {
    assert.equal(formatSizeExact(65536n, { kind: 'iecB', space: true }), '64 KiB');
    assert.equal(formatSizeExact(65536n, { kind: 'iec', space: false }), '64Ki');
    assert.equal(formatSizeExact(65536n, { kind: 'bytes', space: false }), '65536');
  });
  it('infers the style of a written size', () => {
    assert.deepEqual(sizeStyleOf(65536), { kind: 'bytes', space: false });
    assert.deepEqual(sizeStyleOf('65536'), { kind: 'bytes', space: false });
    assert.deepEqual(sizeStyleOf('64K'), { kind: 'letter', space: false });
    assert.deepEqual(sizeStyleOf('64 K'), { kind: 'letter', space: true });
    assert.deepEqual(sizeStyleOf('64Ki'), { kind: 'iec', space: false });
    assert.deepEqual(sizeStyleOf('64 KiB'), { kind: 'iecB', space: true });
    assert.equal(sizeStyleOf('1 GB'), undefined);
    assert.equal(sizeStyleOf('lots'), undefined);
    assert.equal(sizeStyleOf(true), undefined);
  });

  it(`${IEC} property: every size round-trips through formatSizeExact and parseSize, in every style`, () => {
    const sizes = fc.oneof(
      fc.bigInt({ min: 0n, max: 2n ** 64n }),
      // multiples of each binary unit, so the lettered forms are exercised too
      fc.tuple(fc.bigInt({ min: 0n, max: 2n ** 20n }), fc.integer({ min: 0, max: 5 })).map(([n, p]) => n * Ki ** BigInt(p)),
    );
    fc.assert(fc.property(sizes, fc.constantFrom(...styles), (bytes, style) => {
      const written = formatSizeExact(bytes, style);
      assert.equal(valueOf(parseSize(written)), bytes, `"${written}"`);
      // and reading the style back from what was written gives a form that also round-trips
      const inferred = sizeStyleOf(written) ?? letter;
      assert.equal(valueOf(parseSize(formatSizeExact(bytes, inferred))), bytes);
    }));
  });

  it(`${IEC} property: decimal strings "<n>.<f><unit>" are exact rational arithmetic (no float rounding)`, () => {
    const units: [string, bigint][] = [['K', Ki], ['M', Mi], ['G', Gi], ['T', Ti], ['P', Pi], ['kB', 1000n], ['MB', 10n ** 6n], ['GB', 10n ** 9n]];
    fc.assert(fc.property(
      fc.bigInt({ min: 0n, max: 10n ** 12n }), fc.integer({ min: 0, max: 6 }), fc.constantFrom(...units),
      (digits, fractionDigits, [unit, factor]) => {
        const scale = 10n ** BigInt(fractionDigits);
        const whole = digits / scale;
        const fraction = (digits % scale).toString().padStart(fractionDigits, '0');
        const text = fractionDigits === 0 ? `${whole}${unit}` : `${whole}.${fraction}${unit}`;
        const exact = digits * factor;
        const parsed = parseSize(text);
        if (exact % scale === 0n) assert.equal(valueOf(parsed), exact / scale, text);
        else assert.match(errorOf(parsed), /whole number of bytes/, text);
      },
    ));
  });

  it(`${IEC} exactness for huge sizes: 2^61 and 2^64 - 1 survive parse and format`, () => {
    const huge = 2n ** 61n;
    assert.equal(valueOf(parseSize(`${huge}`)), huge);
    assert.equal(valueOf(parseSize(formatSizeExact(huge))), huge);
    const odd = 2n ** 64n - 1n;
    assert.equal(valueOf(parseSize(formatSizeExact(odd))), odd);
    assert.equal(valueOf(parseSize('2305843009213693953')), huge + 1n);
  });
});

describe('units: robustness', () => {
  it('property: parseSize and parseInterval answer every input with a value or a message, never an exception', () => {
    const anything = fc.oneof(fc.string(), fc.stringMatching(/^[-+]?\d{0,30}(\.\d{0,20})?\s?[A-Za-z]{0,4}$/), fc.anything());
    fc.assert(fc.property(anything, (input) => {
      for (const outcome of [parseSize(input), parseInterval(input)]) {
        if (outcome.ok) continue;
        assert.equal(typeof outcome.error, 'string');
        assert.ok(outcome.error.length > 0);
      }
      const size = parseSize(input);
      if (size.ok) assert.ok(size.value >= 0n, 'sizes are never negative');
    }));
  });
});
