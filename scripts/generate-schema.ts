// Writes schema/cachewright.schema.json from the zod schema the loader uses, so the editor's
// validation and the linter's can never disagree. `--check` fails when the file is stale.
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { mappingJsonSchema } from '../src/model/mapping-schema';

const target = join(__dirname, '..', 'schema', 'cachewright.schema.json');
const text = `${JSON.stringify(mappingJsonSchema(), null, 2)}\n`;
if (process.argv.includes('--check')) {
  let current = '';
  try {
    current = readFileSync(target, 'utf8');
  } catch {
    // missing counts as stale
  }
  if (current !== text) {
    process.stderr.write('schema/cachewright.schema.json is out of date: run "npm run schema"\n');
    process.exit(1);
  }
} else {
  writeFileSync(target, text);
}
