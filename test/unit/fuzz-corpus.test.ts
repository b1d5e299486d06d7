// Replays the fuzz corpus (test/fuzz-corpus/<target>/: inputs that once broke an invariant, plus each
// target's seeds) through the same checks `npm run fuzz` applies, so a fixed bug stays fixed.
import { CORPUS, TARGETS } from '../fuzz/targets';
import { corpusOf } from '../fuzz/run';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { strict as assert } from 'node:assert';

describe('fuzz corpus replay (npm run fuzz keeps it)', function () {
  this.timeout(120000);
  for (const target of TARGETS) {
    it(`${target.name}: every seed and every saved input keeps the reader's invariants`, async () => {
      const inputs = corpusOf(target);
      const saved = fs.existsSync(path.join(CORPUS, target.name)) ? fs.readdirSync(path.join(CORPUS, target.name)).length : 0;
      assert.equal(inputs.length, target.seeds().length + saved);
      for (const input of inputs) await target.check(input);
    });
  }
});
