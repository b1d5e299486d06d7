// `cachewright inspect` per CONTRACTS.md §2 and §3: the JSON fields, exact integer byte counts, the
// text report with its allocation bar, and exit codes (2 for any failed image or a usage error).
import { strict as assert } from 'node:assert';
import { writeFileSync } from 'node:fs';
import { allocationBar, runInspect } from '../../src/cli/inspect';
import { tempFolder } from './helpers';
import { writeImage } from './qcow2-writer';

const GiB = 1n << 30n;

async function run(args: string[], cwd?: string): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await runInspect(args, { stdout: (s) => (out += s), stderr: (s) => (err += s), ...(cwd ? { cwd, stderrIsTTY: false } : {}) });
  return { code, out, err };
}

const CONTRACT_FIELDS = ['path', 'version', 'virtualSize', 'clusterSize', 'extendedL2', 'refcountBits', 'l1Entries', 'l2TablesAllocated', 'dataClustersAllocated', 'l2FullCoverage', 'l2AllocatedCoverage', 'backing', 'dirty', 'chain'];

describe('cachewright inspect', function () {
  this.timeout(60000);
  const folder = tempFolder('inspect');
  after(() => folder.remove());
  before(() => {
    writeImage(folder.file('base.qcow2'), { version: 2, clusterBits: 16, virtualSize: 20n * GiB, clusters: [{ guest: 0, kind: 'data' }, { guest: 1, kind: 'data' }] });
    writeImage(folder.file('top.qcow2'), { version: 3, clusterBits: 16, virtualSize: 20n * GiB, backing: { name: 'base.qcow2', format: 'qcow2' }, clusters: [{ guest: 5, kind: 'data' }] });
    // 4 EiB virtual: byte counts beyond 2^53 must print as exact integers
    writeImage(folder.file('vast.qcow2'), { version: 3, clusterBits: 21, virtualSize: 1n << 62n, clusters: [], writeData: false });
    writeFileSync(folder.file('readme.qcow2'), 'just text\n');
  });

  it('prints the CONTRACTS §3 JSON shape with the chain, exit 0', async () => {
    const { code, out, err } = await run(['top.qcow2', '--format', 'json'], folder.dir);
    assert.equal(code, 0, err);
    const parsed = JSON.parse(out) as { images: Array<Record<string, unknown>> };
    assert.equal(parsed.images.length, 1);
    const image = parsed.images[0]!;
    for (const field of CONTRACT_FIELDS) assert.ok(field in image, `field ${field}`);
    assert.equal('error' in image, false, 'error is absent on success');
    assert.equal(image.path, 'top.qcow2');
    assert.equal(image.virtualSize, 21474836480);
    assert.equal(image.clusterSize, 65536);
    assert.equal(image.backing, 'base.qcow2');
    // [CACHE] 20 GiB at 64 KiB clusters -> 2.5 MiB (FACTS check table, common practice)
    assert.equal(image.l2FullCoverage, 2621440);
    assert.equal(image.l2AllocatedCoverage, 65536);
    const chain = image.chain as Array<Record<string, unknown>>;
    assert.equal(chain.length, 1);
    for (const field of CONTRACT_FIELDS) assert.ok(field in chain[0]!, `chain field ${field}`);
    assert.equal(chain[0]!.path, 'base.qcow2');
    assert.equal(chain[0]!.version, 2);
    assert.equal(chain[0]!.dataClustersAllocated, 2);
  });

  it('writes byte counts as exact JSON integers, even past 2^53', async () => {
    const { code, out } = await run(['vast.qcow2', '--format=json'], folder.dir);
    assert.equal(code, 0);
    assert.match(out, /"virtualSize": 4611686018427387904,/);
    // [CACHE] 2^62 / 2 MiB clusters * 8 bytes = 2^44 bytes of L2 entries
    assert.match(out, /"l2FullCoverage": 17592186044416,/);
  });

  it('--no-chain leaves the backing files alone', async () => {
    const { code, out } = await run(['top.qcow2', '--format', 'json', '--no-chain'], folder.dir);
    assert.equal(code, 0);
    assert.deepEqual((JSON.parse(out) as { images: Array<{ chain: unknown[] }> }).images[0]!.chain, []);
  });

  it('reports a failed image in place, keeps going and exits 2', async () => {
    const { code, out } = await run(['readme.qcow2', 'missing.qcow2', 'base.qcow2', '--format', 'json'], folder.dir);
    assert.equal(code, 2);
    const images = (JSON.parse(out) as { images: Array<{ path: string; error?: string; errorKind?: string; version: unknown }> }).images;
    assert.deepEqual(images.map((i) => i.errorKind), ['not-qcow2', 'missing', undefined]);
    assert.match(images[0]!.error!, /^readme\.qcow2: is not a qcow2 image/);
    assert.equal(images[0]!.version, null);
  });

  it('exits 2 when a backing layer fails', async () => {
    writeImage(folder.file('orphan.qcow2'), { version: 3, clusterBits: 16, virtualSize: GiB, backing: { name: 'nowhere.qcow2' }, clusters: [] });
    const { code, out } = await run(['orphan.qcow2'], folder.dir);
    assert.equal(code, 2);
    assert.match(out, /backing 1: nowhere\.qcow2\n {4}error: nowhere\.qcow2: no such file/);
  });

  it('prints a text report with the allocation bar', async () => {
    const { code, out } = await run(['top.qcow2'], folder.dir);
    assert.equal(code, 0);
    assert.match(out, /^top\.qcow2: qcow2 v3, 20 GiB virtual, 64 KiB clusters, 16-bit refcounts$/m);
    assert.match(out, /L2 cache +64 KiB holds every allocated table now; 2\.5 MiB maps the whole disk/);
    assert.match(out, /map +\|,{1} {63}\| under 0\.01% stored, 320 MiB a cell/);
    assert.match(out, /backing 1: base\.qcow2: qcow2 v2/);
    assert.doesNotMatch(out, /\bat .*\.ts:\d+/);
  });

  it('draws the bar by share: full, over half, over a quarter, some, zeros only, nothing', () => {
    assert.equal(allocationBar([1, 0.6, 0.3, 0.01, 0, 0], [0, 0, 0, 0, 0.5, 0]), '#=-,0 ');
  });

  it('usage errors exit 2 with the usage text', async () => {
    for (const args of [[], ['--bogus', 'x'], ['x', '--format', 'yaml'], ['x', '--format']]) {
      const { code, err, out } = await run(args);
      assert.equal(code, 2, args.join(' '));
      assert.match(err, /^cachewright inspect: .*\n\nusage: cachewright inspect IMAGE/);
      assert.equal(out, '');
    }
    const help = await run(['--help']);
    assert.equal(help.code, 0);
    assert.match(help.out, /^usage: cachewright inspect/);
  });
});
