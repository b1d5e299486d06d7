// The access spec strings of the command line: `uniform|zipf:S|hotspot:P/Q|sequential`.
// The grammar is ours (CONTRACTS.md / issue 6); the checks are that every form round-trips and every
// bad value gets a message naming the value and what is allowed, never an exception.
import { strict as assert } from 'node:assert';
import { formatAccessSpec, parseAccessSpec, type AccessPattern } from '../../../src/core/cachemodel';

function parsed(text: string): AccessPattern {
  const result = parseAccessSpec(text);
  if (!result.ok) assert.fail(`${text}: ${result.problem.message}`);
  return result.value;
}

function problem(text: string): string {
  const result = parseAccessSpec(text);
  assert.equal(result.ok, false, `${text} should be rejected`);
  return result.ok ? '' : result.problem.message;
}

describe('cachemodel: access spec parser', () => {
  it('reads the four forms', () => {
    assert.deepEqual(parsed('uniform'), { kind: 'uniform' });
    assert.deepEqual(parsed('sequential'), { kind: 'sequential' });
    assert.deepEqual(parsed('zipf:0.8'), { kind: 'zipf', exponent: 0.8 });
    assert.deepEqual(parsed('hotspot:0.9/0.1'), { kind: 'hotspot', share: 0.9, fraction: 0.1 });
  });

  it('accepts case, spaces and percentages', () => {
    assert.deepEqual(parsed('  Zipf : 1 '), { kind: 'zipf', exponent: 1 });
    assert.deepEqual(parsed('HOTSPOT:90%/10%'), { kind: 'hotspot', share: 0.9, fraction: 0.1 });
    assert.deepEqual(parsed('hotspot: .8 / 20 %'), { kind: 'hotspot', share: 0.8, fraction: 0.2 });
    assert.deepEqual(parsed('zipf:0'), { kind: 'zipf', exponent: 0 });
  });

  it('round-trips through formatAccessSpec', () => {
    for (const text of ['uniform', 'sequential', 'zipf:0.6', 'zipf:1.25', 'hotspot:0.95/0.05']) {
      assert.equal(formatAccessSpec(parsed(text)), text);
      assert.deepEqual(parsed(formatAccessSpec(parsed(text))), parsed(text));
    }
  });

  it('names the value and what is allowed', () => {
    assert.match(problem('random'), /"random".*uniform, zipf:S .*hotspot:P\/Q.*sequential/);
    assert.match(problem(''), /expected uniform/);
    assert.match(problem('zipf'), /zipf needs an exponent/);
    assert.match(problem('zipf:'), /zipf needs an exponent/);
    assert.match(problem('zipf:abc'), /"abc" is not a number.*from 0 to 4/);
    assert.match(problem('zipf:-1'), /"-1" is not a number|out of range/);
    assert.match(problem('zipf:7'), /exponent 7 is out of range.*from 0 to 4/);
    assert.match(problem('zipf:80%'), /not a number/);
    assert.match(problem('hotspot:0.9'), /P\/Q/);
    assert.match(problem('hotspot:0.9/0.1/2'), /P\/Q/);
    assert.match(problem('hotspot:x/0.1'), /share "x" is not a number/);
    assert.match(problem('hotspot:0.9/y'), /fraction "y" is not a number/);
    assert.match(problem('hotspot:1.5/0.1'), /share 1.5 is out of range.*0 to 1/);
    assert.match(problem('hotspot:0.9/0'), /fraction 0 is out of range/);
    assert.match(problem('hotspot:0.9/100%'), /fraction 1 is out of range/);
    assert.match(problem('uniform:3'), /takes no parameter/);
    assert.match(problem('sequential:1'), /takes no parameter/);
  });

  it('reports the field it was given', () => {
    const result = parseAccessSpec('nope', 'disks[0].pattern');
    assert.ok(!result.ok);
    assert.equal(result.problem.field, 'disks[0].pattern');
  });
});
