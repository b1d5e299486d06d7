// `cachewright inspect` (contract §2, §3): the JSON groups (layout, allocation, caches, chain), exact
// integer byte counts, the text report in the same groups with its allocation bar, and exit codes
// (2 for any failed image or a usage error).
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

const CONTRACT_GROUPS: Record<string, string[]> = {
  layout: ['formatVersion', 'virtualSize', 'clusterSize', 'l2EntryWidth', 'subclusters', 'refcountWidth'],
  allocation: ['l1Entries', 'l2Tables', 'dataClusters', 'storedShare'],
  caches: ['l2Allocated', 'l2WholeDisk'],
};
const CONTRACT_FIELDS = ['path', ...Object.keys(CONTRACT_GROUPS), 'backing', 'dirty', 'chain'];
type Json = Record<string, unknown>;
const group = (image: Json, name: string): Json => image[name] as Json;

function assertContractShape(image: Json): void {
  for (const field of CONTRACT_FIELDS) assert.ok(field in image, `field ${field}`);
  for (const [name, keys] of Object.entries(CONTRACT_GROUPS)) for (const key of keys) assert.ok(key in group(image, name), `${name}.${key}`);
}

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

  it('prints the contract §3 JSON groups with the chain, exit 0', async () => {
    const { code, out, err } = await run(['top.qcow2', '--format', 'json'], folder.dir);
    assert.equal(code, 0, err);
    const parsed = JSON.parse(out) as { images: Json[] };
    assert.equal(parsed.images.length, 1);
    const image = parsed.images[0]!;
    assertContractShape(image);
    assert.equal('error' in image, false, 'error is absent on success');
    assert.equal(image.path, 'top.qcow2');
    assert.deepEqual(group(image, 'layout'), { formatVersion: 3, virtualSize: 21474836480, clusterSize: 65536, l2EntryWidth: 8, subclusters: 1, refcountWidth: 16 });
    assert.deepEqual(image.backing, { name: 'base.qcow2', path: 'base.qcow2', format: 'qcow2' });
    // [CACHE] 20 GiB at 64 KiB clusters -> 2.5 MiB (docs/sources.md check values, common practice)
    assert.equal(group(image, 'caches').l2WholeDisk, 2621440);
    // one L2 table present, and one L2 table is one cluster [SPEC]
    assert.equal(group(image, 'allocation').l2Tables, 1);
    assert.equal(group(image, 'caches').l2Allocated, 65536);
    const chain = image.chain as Json[];
    assert.equal(chain.length, 1);
    assertContractShape(chain[0]!);
    assert.equal(chain[0]!.path, 'base.qcow2');
    assert.equal(group(chain[0]!, 'layout').formatVersion, 2);
    assert.equal(group(chain[0]!, 'allocation').dataClusters, 2);
    assert.equal(chain[0]!.backing, null);
    // each layer has its own caches [CACHE]: the sum over the chain, L2 + refcount per layer
    const sum = image.chainCaches as Json;
    assert.equal(sum.wholeDisk, 2 * (2621440 + 4 * 65536));
    assert.equal(sum.layersSized, 2);
  });

  it('writes byte counts as exact JSON integers, even past 2^53', async () => {
    const { code, out } = await run(['vast.qcow2', '--format=json'], folder.dir);
    assert.equal(code, 0);
    assert.match(out, /"virtualSize": 4611686018427387904,/);
    // [CACHE] 2^62 / 2 MiB clusters * 8 bytes = 2^44 bytes of L2 entries
    assert.match(out, /"l2WholeDisk": 17592186044416,/);
  });

  it('--no-chain leaves the backing files alone', async () => {
    const { code, out } = await run(['top.qcow2', '--format', 'json', '--no-chain'], folder.dir);
    assert.equal(code, 0);
    assert.deepEqual((JSON.parse(out) as { images: Array<{ chain: unknown[] }> }).images[0]!.chain, []);
  });

  it('reports a failed image in place, keeps going and exits 2', async () => {
    const { code, out } = await run(['readme.qcow2', 'missing.qcow2', 'base.qcow2', '--format', 'json'], folder.dir);
    assert.equal(code, 2);
    const images = (JSON.parse(out) as { images: Array<{ path: string; error?: string; errorKind?: string; layout?: unknown }> }).images;
    assert.deepEqual(images.map((i) => i.errorKind), ['not-qcow2', 'missing', undefined]);
    assert.match(images[0]!.error!, /^readme\.qcow2: is not a qcow2 image/);
    assert.equal(images[0]!.layout, undefined, 'no groups for a file that is not a qcow2 image');
  });

  it('exits 2 when a backing layer fails', async () => {
    writeImage(folder.file('orphan.qcow2'), { version: 3, clusterBits: 16, virtualSize: GiB, backing: { name: 'nowhere.qcow2' }, clusters: [] });
    const { code, out } = await run(['orphan.qcow2'], folder.dir);
    assert.equal(code, 2);
    assert.match(out, /backing 1: nowhere\.qcow2\n {6}error: nowhere\.qcow2: no such file/);
  });

  it('prints a text report in the same groups, human units only, with the allocation bar and its cell size', async () => {
    const { code, out } = await run(['top.qcow2'], folder.dir);
    assert.equal(code, 0);
    assert.match(out, /^top\.qcow2\n  layout\n    format +qcow2 version 3\n    virtual size +20 GiB\n    cluster size +64 KiB\n/);
    assert.match(out, /^  allocation\n    L1 entries +40\n    L2 tables present +1\n/m);
    assert.match(out, /^  caches\n    L2 cache for the tables present +64 KiB\n    L2 cache for the whole disk +2\.5 MiB\n/m);
    // 20 GiB in 64 cells: 320 MiB each; one cluster stored in the first cell
    assert.match(out, /allocation map +64 cells of 320 MiB each\n +\|,{1} {63}\|/);
    assert.match(out, /^  chain\n    backing 1: base\.qcow2\n      layout\n        format +qcow2 version 2/m);
    assert.match(out, /^    over the chain\n      caches for the tables present/m);
    assert.doesNotMatch(out, /bytes\)|\d{6,}/, 'exact byte counts belong in JSON');
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
