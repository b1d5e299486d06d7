// Writes the "Messages" section of every rule page (docs/rules/<id>.md) from the rule's wording
// table, so the pages list exactly the texts the engine says. `--check` fails when a page is stale;
// test/rules/wording.test.ts checks the same. Run with `npm run docs:messages`.
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { RULES } from '../src/rules';
import type { Wording } from '../src/rules/wording';

const HEADING = '## Messages';
const INTRO = [
  'Every text a finding of this rule can carry, from the wording table in its source file.',
  '`{name}` marks a value filled in for each finding; short parts (a unit, a clause) are',
  'said first and filled into the longer texts.',
].join('\n');

/** One line per key: "- `key`: text". */
export function messagesList(wording: Wording): string {
  return Object.entries(wording).map(([key, text]) => `- \`${key}\`: ${text}`).join('\n');
}

/** The page with its Messages section replaced, or added before "## Cautions" (else at the end). */
export function withMessages(page: string, wording: Wording): string {
  const section = `${HEADING}\n${INTRO}\n\n${messagesList(wording)}\n`;
  const start = page.indexOf(`\n${HEADING}\n`);
  if (start !== -1) {
    const next = page.indexOf('\n## ', start + 1);
    return `${page.slice(0, start + 1)}${section}${next === -1 ? '' : `\n${page.slice(next + 1)}`}`;
  }
  const cautions = page.indexOf('\n## Cautions\n');
  if (cautions !== -1) return `${page.slice(0, cautions + 1)}${section}\n${page.slice(cautions + 1)}`;
  return `${page.replace(/\n*$/, '\n')}\n${section}`;
}

if (require.main === module) {
  const root = join(__dirname, '..');
  let stale = 0;
  for (const rule of RULES) {
    const file = join(root, rule.docs);
    const page = readFileSync(file, 'utf8');
    const next = withMessages(page, rule.wording);
    if (next === page) continue;
    stale++;
    if (process.argv.includes('--check')) process.stderr.write(`${rule.docs}: the Messages section is out of date: run "npm run docs:messages"\n`);
    else {
      writeFileSync(file, next);
      process.stdout.write(`updated ${rule.docs}\n`);
    }
  }
  if (stale > 0 && process.argv.includes('--check')) process.exit(1);
}
