// The access pattern notation of every front end: random, sequential, mixed, zipf(S), "P% on Q%".
// The notation is ours (docs/sources.md, access patterns); the checks are that every form round-trips
// and every bad value gets a message naming the value and the accepted forms, never an exception.
import { strict as assert } from 'node:assert';
import { formatAccessSpec, parseAccessSpec, type AccessPattern } from '../../../src/core/cachemodel';

function parsed(text: string): AccessPattern {
  const result = parseAccessSpec(text);
  if (!result.ok) assert.fail(`${text}: ${result.error.message}`);
  return result.value;
}

function problem(text: string): string {
  const result = parseAccessSpec(text);
  assert.equal(result.ok, false, `${text} should be rejected`);
  return result.ok ? '' : result.error.message;
}

const ACCEPTED = /random, sequential, mixed, zipf\(S\).*"P% on Q%"/;

describe('cachemodel: access pattern notation', () => {
  it('reads the five forms (mixed is modelled as random)', () => {
    assert.deepEqual(parsed('random'), { kind: 'random' });
    assert.deepEqual(parsed('mixed'), { kind: 'random' });
    assert.deepEqual(parsed('sequential'), { kind: 'sequential' });
    assert.deepEqual(parsed('zipf(0.8)'), { kind: 'zipf', exponent: 0.8 });
    assert.deepEqual(parsed('90% on 10%'), { kind: 'concentrated', share: 0.9, fraction: 0.1 });
  });

  it('accepts case and spaces', () => {
    assert.deepEqual(parsed('  Zipf ( 1 ) '), { kind: 'zipf', exponent: 1 });
    assert.deepEqual(parsed('RANDOM'), { kind: 'random' });
    assert.deepEqual(parsed('80 % ON 20 %'), { kind: 'concentrated', share: 0.8, fraction: 0.2 });
    assert.deepEqual(parsed('99.5% on 0.5%'), { kind: 'concentrated', share: 0.995, fraction: 0.005 });
    assert.deepEqual(parsed('zipf(0)'), { kind: 'zipf', exponent: 0 });
  });

  it('round-trips through formatAccessSpec', () => {
    for (const text of ['random', 'sequential', 'zipf(0.6)', 'zipf(1.25)', '95% on 5%', '90% on 10%']) {
      assert.equal(formatAccessSpec(parsed(text)), text);
      assert.deepEqual(parsed(formatAccessSpec(parsed(text))), parsed(text));
    }
  });

  it('old spellings and unknown words name the accepted forms', () => {
    for (const text of ['zipf:1.1', 'hotspot:0.9/0.1', 'uniform', 'uniform:3', 'bursty', '', '90/10', '0.9 on 0.1']) {
      assert.match(problem(text), ACCEPTED, text);
      assert.match(problem(text), new RegExp(`"${text.replace(/[.*+?^${}()|[\]\\/]/g, '\\$&')}"`), text);
    }
  });

  it('names the bad number and the range', () => {
    assert.match(problem('zipf()'), /exponent "" is not a number.*from 0 to 4/);
    assert.match(problem('zipf(abc)'), /"abc" is not a number.*from 0 to 4/);
    assert.match(problem('zipf(-1)'), /"-1" is not a number/);
    assert.match(problem('zipf(7)'), /exponent 7 is out of range.*from 0 to 4/);
    assert.match(problem('zipf(80%)'), /not a number/);
    assert.match(problem('x% on 10%'), /share of I\/O "x%" is not a percentage/);
    assert.match(problem('90% on y%'), /share of the disk "y%" is not a percentage/);
    assert.match(problem('150% on 10%'), /share of I\/O 150% is out of range/);
    assert.match(problem('90% on 0%'), /share of the disk 0% is out of range/);
    assert.match(problem('90% on 100%'), /share of the disk 100% is out of range/);
  });

  it('reports the field it was given', () => {
    const result = parseAccessSpec('nope', 'disks[0].pattern');
    assert.ok(!result.ok);
    assert.equal(result.error.field, 'disks[0].pattern');
  });
});
