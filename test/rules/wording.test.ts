// Every rule's wording (src/rules/wording.ts) against what its table tests produce: each key's text
// is said by at least one case, no finding, related place or fix title carries a text outside the
// table, every slot is filled, and the rule's docs page lists the same texts. The texts are the
// project's own (docs/rules/<id>.md); the check is that one table feeds the engine and the page.
import { strict as assert } from 'node:assert';
import { readdirSync, readFileSync } from 'node:fs';
import * as path from 'node:path';
import { RULES } from '../../src/rules';
import { declareRule } from '../../src/rules/types';
import { say, slotsIn } from '../../src/rules/wording';
import { TEXT_SOURCES, type ProducedTexts } from './harness';
import { withMessages } from '../../scripts/rule-messages';

const ROOT = path.resolve(__dirname, '../..');

// The rule test files register their tables as they load; loading them here too lets this file run alone.
for (const file of readdirSync(__dirname)) if (file.endsWith('.test.ts') && file !== path.basename(__filename)) require(path.join(__dirname, file));

const escape = (text: string): string => text.replace(/[.*+?^$()|[\]\\{}]/g, '\\$&');

/** A text as a pattern: its words as written, each slot any run of characters (a fill may be empty). */
function patternOf(text: string): string {
  return text.split(/\{[^{}]*\}/).map(escape).join('[\\s\\S]*?');
}

describe('rule wording', () => {
  describe('say', () => {
    it('fills every slot by name, a slot used twice both times, and leaves the rest of the text as written', () => {
      const wording = { twice: 'with {cluster} clusters each miss reads a whole {cluster} table; {slice} entries' } as const;
      assert.equal(say(wording, 'twice', { cluster: '2 MiB', slice: '4 KiB' }), 'with 2 MiB clusters each miss reads a whole 2 MiB table; 4 KiB entries');
    });
    it('puts values in as they are: braces inside a value are not slots', () => {
      assert.equal(say({ problem: 'cannot be used: {problem}.' } as const, 'problem', { problem: 'a {weird} name' }), 'cannot be used: a {weird} name.');
    });
    it('a text without slots is said as it is', () => {
      assert.equal(say({ here: 'L2 cache set here' } as const, 'here'), 'L2 cache set here');
    });
    it('the compiler refuses an unknown key, a missing fill and a misspelt slot (npx tsc checks these lines)', () => {
      const wording = { cover: 'maps {covered} of {disk}', here: 'set here' } as const;
      // @ts-expect-error a misspelt slot: "cover" has {covered}, not {coverage}
      assert.equal(say(wording, 'cover', { coverage: '8 GiB', disk: '1 TiB' }), 'maps {covered} of 1 TiB');
      // @ts-expect-error a missing fill
      assert.equal(say(wording, 'cover'), 'maps {covered} of {disk}');
      // @ts-expect-error a key the wording does not have
      assert.equal(say(wording, 'elsewhere'), 'elsewhere');
      const rule = declareRule({
        id: 'wording-probe',
        severity: 'info',
        description: 'checks the types of reports',
        fixable: false,
        wording,
        checkDisk({ report }) {
          report({ says: 'here' });
          // @ts-expect-error a report's fill is checked against its text too
          report({ says: 'cover', fill: { covered: '8 GiB' } });
        },
      });
      assert.equal(rule.docs, 'docs/rules/wording-probe.md');
    });
    it('lists a text\'s slots in order of first appearance', () => {
      assert.deepEqual(slotsIn('{a} and {b}, then {a} again{c}'), ['a', 'b', 'c']);
    });
  });

  for (const rule of RULES) {
    describe(rule.id, () => {
      const entries = Object.entries(rule.wording);

      it('has a wording whose slots are plain names and whose braces pair up', () => {
        assert.ok(entries.length > 0, 'a rule says at least one thing');
        for (const [key, text] of entries) {
          assert.match(key, /^[a-z][A-Za-z0-9]*$/, `key ${key}`);
          for (const slot of slotsIn(text)) assert.match(slot, /^[a-z][A-Za-z0-9]*$/, `slot {${slot}} of ${key}`);
          assert.equal(text.replace(/\{[a-z][A-Za-z0-9]*\}/g, '').search(/[{}]/), -1, `stray brace in ${key}: ${text}`);
        }
      });

      it('its table tests say every key, and nothing outside the wording', async () => {
        const sources = TEXT_SOURCES.get(rule.id) ?? [];
        assert.ok(sources.length > 0, `test/rules has no table for ${rule.id}`);
        const produced: ProducedTexts = { messages: [], others: [] };
        for (const source of sources) {
          await source.before?.();
          try {
            const texts = source.produce();
            produced.messages.push(...texts.messages);
            produced.others.push(...texts.others.filter((t) => t !== ''));
          } finally {
            await source.after?.();
          }
        }
        const whole = entries.map(([key, text]) => ({ key, exact: new RegExp(`^${patternOf(text)}$`), within: new RegExp(patternOf(text)) }));
        const slots = new Set(entries.flatMap(([, text]) => slotsIn(text)));
        for (const text of [...produced.messages, ...produced.others]) {
          assert.ok(whole.some((w) => w.exact.test(text)), `${JSON.stringify(text)} is said outside the wording of ${rule.id}`);
          for (const slot of slots) assert.ok(!text.includes(`{${slot}}`), `slot {${slot}} left unfilled in ${JSON.stringify(text)}`);
        }
        const all = [...produced.messages, ...produced.others];
        const unsaid = whole.filter((w) => !all.some((text) => w.within.test(text))).map((w) => w.key);
        assert.deepEqual(unsaid, [], `keys of ${rule.id} no table case says: ${unsaid.join(", ")}`);
      });

      it(`its page ${rule.docs} lists every text of the wording under "Messages"`, () => {
        const page = readFileSync(path.join(ROOT, rule.docs), 'utf8');
        assert.equal(withMessages(page, rule.wording), page, `the Messages section of ${rule.docs} is out of date: run "npm run docs:messages"`);
      });
    });
  }
});
