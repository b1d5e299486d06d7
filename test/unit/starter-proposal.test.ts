// The starter mapping maps what a value means and says when it only guessed from a key's name
// (docs/sources.md: one name per concept; `cachewright size --cache` is the L2 cache).
import { strict as assert } from 'node:assert';
import { proposeMapping } from '../../src/extension/starter-proposal';
import { loadMapping } from '../../src/lint';

const fleet = (tuning: Record<string, string>) => ({
  vms: [{ hostname: 'plover-01', ram: '8G', volumes: [{ label: 'root', capacity: '40G', kind: 'qcow2', tuning }] }],
});

describe('starter mapping proposal', () => {
  it('a bare "cache" key is the L2 cache, marked as a guess', () => {
    const proposal = proposeMapping(fleet({ cache: '4M' }), 'fleet/plover.yaml');
    assert.ok(proposal);
    assert.equal(proposal.diskFields.l2Cache, '$.tuning.cache');
    assert.equal(proposal.diskFields.combinedCache, undefined);
    assert.match(proposal.guessed.l2Cache ?? '', /read as the L2 cache.*combinedCache/);
    assert.match(proposal.text, /l2Cache: "\$\.tuning\.cache" +# guessed: /);
    assert.deepEqual(loadMapping(proposal.text, '/tmp/cachewright.yaml').problems, [], proposal.text);
  });

  it('names that say what they hold are mapped without a guess', () => {
    const proposal = proposeMapping(fleet({ l2Cache: '4M', combinedCache: '6M' }), 'fleet/plover.yaml');
    assert.ok(proposal);
    assert.equal(proposal.diskFields.l2Cache, '$.tuning.l2Cache');
    assert.equal(proposal.diskFields.combinedCache, '$.tuning.combinedCache');
    assert.deepEqual(proposal.guessed, {});
    assert.doesNotMatch(proposal.text, /guessed/);
  });
});
