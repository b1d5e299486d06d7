// `npm run demo`: lints the bundled demo fleet and reads one of its qcow2 images, as a new user
// would first try cachewright. Findings are the point of the demo, so exit code 1 (findings) is a
// successful demo; only a broken run (exit 2) fails it.
import { spawnSync } from 'node:child_process';

const run = (title, args) => {
  // Quoted as a shell needs it, so a printed line can be copied as it stands.
  const shown = args.map((a) => (/^[\w@%+=:,./-]+$/.test(a) ? a : `'${a.replace(/'/g, `'\\''`)}'`));
  process.stdout.write(`\n$ cachewright ${shown.join(' ')}    # ${title}\n\n`);
  const result = spawnSync(process.execPath, ['dist/cli.js', ...args], { stdio: 'inherit' });
  return result.status ?? 2;
};

// The ledger disk names an I/O trace of its invented workload: write it first.
spawnSync(process.execPath, ['scripts/demo-traces.mjs'], { stdio: 'inherit' });
const lint = run('lint the demo fleet (examples/)', ['lint', '--mapping', 'examples/cachewright.yaml']);
const curve = run('the measured hit ratio of the ledger disk at every cache size', ['curve', 'examples/fleet/traces/ledger.log.gz', '--size', '1T', '--at', '8M']);
const inspect = run('read a qcow2 overlay and its backing file', ['inspect', 'examples/images/tern-db-root.qcow2']);
const size = run('the numbers for one disk', ['size', '--size', '1T', '--cache', '8M', '--access', 'zipf(0.8)']);
process.stdout.write(`\nThe lint exited ${lint} (0: clean, 1: findings, 2: broken input). Try "node dist/cli.js lint --mapping examples/cachewright.yaml --format sarif",\nor open examples/ in VS Code with the extension (npm run package builds the .vsix).\n`);
process.exit(lint === 2 || inspect !== 0 || size !== 0 || curve !== 0 ? 1 : 0);
