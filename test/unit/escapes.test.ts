// The type system's escape hatches (casts and non-null assertions, counted as compiler nodes by
// scripts/count-escapes.ts) may only go down: a change that adds one must remove another or use a
// type guard, a schema or a typed helper instead.
import { strict as assert } from 'node:assert';
import { countEscapes, ESCAPE_CEILING } from '../../scripts/count-escapes';

describe('escape hatches in src/ and webview/', () => {
  it(`at most ${ESCAPE_CEILING.casts} casts and ${ESCAPE_CEILING.nonNull} non-null assertions`, () => {
    const count = countEscapes();
    assert.ok(count.files > 50, `only ${count.files} source files found`);
    const where = count.perFile.map(([file, c, n]) => `${file}: ${c} casts, ${n} non-null`).join('\n');
    assert.ok(count.casts <= ESCAPE_CEILING.casts, `${count.casts} casts, more than the ceiling of ${ESCAPE_CEILING.casts}:\n${where}`);
    assert.ok(count.nonNull <= ESCAPE_CEILING.nonNull, `${count.nonNull} non-null assertions, more than the ceiling of ${ESCAPE_CEILING.nonNull}:\n${where}`);
  });
});
