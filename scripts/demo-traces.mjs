// Writes the I/O traces of the demo fleet's invented workloads (examples/fleet/traces/, not kept in
// git), so the demo's lint can show a measured recommendation. Seeded: the same files every run.
//   node scripts/demo-traces.mjs
// The ledger disk of tern-db-01 (1 TiB, examples/fleet/ticketing.yaml): an invented ticketing
// database with a 24 GiB index near the start of the disk that most lookups read, a journal that
// appends 8 KiB writes at the end of the 700 GiB in use, and reports that read anywhere in it.
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { mulberry32 as generator } from '../test/helpers/seeded-random.cjs';

const GiB = 2 ** 30;
const REQUESTS = 200_000;
const dir = join(import.meta.dirname ?? new URL('.', import.meta.url).pathname, '..', 'examples', 'fleet', 'traces');

function ledger() {
  const random = generator(1203);
  const lines = ['fio version 3 iolog', '0 /dev/vdb add', '1 /dev/vdb open'];
  let journal = 690 * GiB;
  let time = 2;
  for (let i = 0; i < REQUESTS; i++) {
    time += 1 + Math.floor(random() * 40);
    const pick = random();
    let action;
    let offset;
    let length;
    if (pick < 0.72) {
      // index lookups: 16 KiB pages of the 24 GiB index at 8 GiB
      action = 'read';
      offset = 8 * GiB + Math.floor(random() * (24 * GiB / 16384)) * 16384;
      length = 16384;
    } else if (pick < 0.95) {
      // journal appends, then the next one
      action = 'write';
      offset = journal;
      length = 8192;
      journal += 8192;
    } else {
      // reports: 64 KiB reads anywhere in the 700 GiB in use
      action = 'read';
      offset = Math.floor(random() * (700 * GiB / 65536)) * 65536;
      length = 65536;
    }
    lines.push(`${time} /dev/vdb ${action} ${offset} ${length}`);
  }
  lines.push(`${time + 1} /dev/vdb close`);
  return `${lines.join('\n')}\n`;
}

mkdirSync(dir, { recursive: true });
writeFileSync(join(dir, 'ledger.log.gz'), gzipSync(ledger()));
process.stdout.write(`wrote ${join('examples', 'fleet', 'traces', 'ledger.log.gz')} (${REQUESTS} requests)\n`);
