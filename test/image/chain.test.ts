// Backing chains [SPEC "Header": backing_file_offset/size; "Header extensions": backing file format
// name]: names resolve against the image's own folder, formats come from the extension (or the
// file's magic when the image does not say), and cycles, missing and unreadable layers are errors
// of their own kinds.
import { strict as assert } from 'node:assert';
import { mkdirSync, symlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { chainProblem, inspectImage, readChain, reportFailed } from '../../src/image';
import { tempFolder } from './helpers';
import { writeImage } from './qcow2-writer';

const GiB = 1n << 30n;
const MiB = 1n << 20n;

describe('backing chains', function () {
  this.timeout(60000);
  const folder = tempFolder('chain');
  after(() => folder.remove());

  it('resolves names relative to the image folder and sizes every layer with its own cluster size', async () => {
    mkdirSync(folder.file('vm'));
    mkdirSync(folder.file('bases'));
    writeImage(folder.file('bases/gold.qcow2'), { version: 2, clusterBits: 21, virtualSize: 20n * GiB, clusters: [{ guest: 0, kind: 'data' }] });
    writeImage(folder.file('vm/snap.qcow2'), { version: 3, clusterBits: 16, virtualSize: 20n * GiB, backing: { name: '../bases/gold.qcow2', format: 'qcow2' }, clusters: [{ guest: 1, kind: 'data' }] });
    writeImage(folder.file('vm/top.qcow2'), { version: 3, clusterBits: 18, extendedL2: true, virtualSize: 20n * GiB, backing: { name: 'snap.qcow2' }, clusters: [{ guest: 2, kind: 'data', allocatedMask: 1 }] });
    const report = await inspectImage(folder.file('vm/top.qcow2'));
    assert.equal(reportFailed(report), false, report.chain.map((c) => c.error).join());
    assert.equal(report.backing, 'snap.qcow2');
    assert.deepEqual(report.chain.map((l) => l.path), [folder.file('vm/snap.qcow2'), join(folder.dir, 'vm', '../bases/gold.qcow2')]);
    assert.deepEqual(report.chain.map((l) => l.clusterSize), [64n * 1024n, 2n * MiB]);
    assert.deepEqual(report.chain.map((l) => l.version), [3, 2]);
    assert.equal(report.extendedL2, true);
    // each layer's own full-coverage cache [CACHE]: 20 GiB at 64 KiB -> 2.5 MiB (docs/sources.md check values)
    assert.equal(report.chain[0]!.l2FullCoverage, 2560n * 1024n);
    assert.equal(report.chain[0]!.dataClustersAllocated, 1);

    const layers = await readChain(folder.file('vm/top.qcow2'));
    assert.deepEqual(layers.map((l) => [l.name, l.format, l.formatFrom]), [[null, 'qcow2', 'image'], ['snap.qcow2', 'qcow2', 'probed'], ['../bases/gold.qcow2', 'qcow2', 'header']]);
    assert.equal(chainProblem(layers), null);
  });

  it('ends the chain at a raw backing file, sized by the file', async () => {
    writeFileSync(folder.file('disk.raw'), Buffer.alloc(4096, 7));
    writeImage(folder.file('over-raw.qcow2'), { version: 3, clusterBits: 16, virtualSize: 1n * MiB, backing: { name: 'disk.raw', format: 'raw' }, clusters: [] });
    const report = await inspectImage(folder.file('over-raw.qcow2'));
    assert.equal(reportFailed(report), false);
    assert.equal(report.backingFormat, 'raw');
    assert.equal(report.chain.length, 1);
    assert.equal(report.chain[0]!.format, 'raw');
    assert.equal(report.chain[0]!.virtualSize, 4096n);
    assert.equal(report.chain[0]!.clusterSize, null);
  });

  it('probes a backing file with no format named: not qcow2 means raw', async () => {
    writeFileSync(folder.file('plain.img'), Buffer.alloc(8192));
    writeImage(folder.file('over-plain.qcow2'), { version: 3, clusterBits: 16, virtualSize: 1n * MiB, backing: { name: 'plain.img' }, clusters: [] });
    const [, backing] = await readChain(folder.file('over-plain.qcow2'));
    assert.equal(backing!.format, 'raw');
    assert.equal(backing!.formatFrom, 'probed');
  });

  it('reports a cycle as its own kind (a -> b -> a, and an image backed by itself)', async () => {
    writeImage(folder.file('a.qcow2'), { version: 3, clusterBits: 16, virtualSize: GiB, backing: { name: 'b.qcow2', format: 'qcow2' }, clusters: [] });
    writeImage(folder.file('b.qcow2'), { version: 3, clusterBits: 16, virtualSize: GiB, backing: { name: 'a.qcow2', format: 'qcow2' }, clusters: [] });
    const report = await inspectImage(folder.file('a.qcow2'));
    assert.equal(report.error, undefined);
    assert.equal(report.chain.length, 2);
    assert.equal(report.chain[1]!.errorKind, 'cycle');
    assert.match(report.chain[1]!.error!, /refers back to .*a\.qcow2 \(layer 1\)/);
    assert.equal(reportFailed(report), true);

    writeImage(folder.file('self.qcow2'), { version: 3, clusterBits: 16, virtualSize: GiB, backing: { name: 'self.qcow2' }, clusters: [] });
    const problem = chainProblem(await readChain(folder.file('self.qcow2')));
    assert.equal(problem?.kind, 'cycle');
    assert.equal(problem?.layer, 1);
  });

  it('sees a cycle through a symbolic link', async () => {
    writeImage(folder.file('loop.qcow2'), { version: 3, clusterBits: 16, virtualSize: GiB, backing: { name: 'loop-link.qcow2' }, clusters: [] });
    symlinkSync(folder.file('loop.qcow2'), folder.file('loop-link.qcow2'));
    assert.equal(chainProblem(await readChain(folder.file('loop.qcow2')))?.kind, 'cycle');
  });

  it('tells a missing backing file from an unreadable one', async () => {
    writeImage(folder.file('orphan.qcow2'), { version: 3, clusterBits: 16, virtualSize: GiB, backing: { name: 'gone.qcow2', format: 'qcow2' }, clusters: [] });
    const missing = chainProblem(await readChain(folder.file('orphan.qcow2')));
    assert.equal(missing?.kind, 'missing');
    assert.match(missing!.message, /gone\.qcow2: no such file/);

    mkdirSync(folder.file('folder-base.qcow2'));
    writeImage(folder.file('over-folder.qcow2'), { version: 3, clusterBits: 16, virtualSize: GiB, backing: { name: 'folder-base.qcow2', format: 'qcow2' }, clusters: [] });
    assert.equal(chainProblem(await readChain(folder.file('over-folder.qcow2')))?.kind, 'unreadable');

    writeFileSync(folder.file('text-base.qcow2'), 'not an image');
    writeImage(folder.file('over-text.qcow2'), { version: 3, clusterBits: 16, virtualSize: GiB, backing: { name: 'text-base.qcow2', format: 'qcow2' }, clusters: [] });
    assert.equal(chainProblem(await readChain(folder.file('over-text.qcow2')))?.kind, 'not-qcow2');
  });

  it('stops at the depth limit', async () => {
    mkdirSync(folder.file('deep'));
    for (let i = 0; i < 10; i++) {
      writeImage(folder.file(`deep/l${i}.qcow2`), { version: 3, clusterBits: 16, virtualSize: MiB, backing: i < 9 ? { name: `l${i + 1}.qcow2`, format: 'qcow2' } : undefined, clusters: [] });
    }
    const full = await readChain(folder.file('deep/l0.qcow2'));
    assert.equal(full.length, 10);
    assert.equal(chainProblem(full), null);
    const limited = await readChain(folder.file('deep/l0.qcow2'), { maxDepth: 4 });
    assert.equal(limited.length, 5);
    assert.equal(chainProblem(limited)?.kind, 'too-deep');
  });

  it('does not follow the chain when asked not to', async () => {
    const report = await inspectImage(folder.file('orphan.qcow2'), { followChain: false });
    assert.equal(report.backing, 'gone.qcow2');
    assert.deepEqual(report.chain, []);
    assert.equal(reportFailed(report), false);
  });
});
