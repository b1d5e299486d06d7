// The qcow2 image viewer inside the real extension host: it opens images as a read-only custom
// editor, its webview draws the model the host computed, and the files are never written.
// Images come from the test writer (test/image/qcow2-writer.ts, built from the qcow2 specification
// and checked against an independent reader in test/image/libqcow.test.ts), so every expected count
// is the writer's own ground truth; expected cache sizes are worked from docs/sources.md's formulas and
// named sources beside each check.
import * as assert from 'node:assert/strict';
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import * as vscode from 'vscode';
import { writeImage, type ClusterSpec, type WrittenImage } from '../../image/qcow2-writer';
import { decodeSnapshot, type ImageView, type ViewerSnapshot } from '../../../src/protocol/image-viewer';
import { api, demoFile, waitFor } from './helpers';

const VIEW_TYPE = 'cachewright.qcow2Image';
const KiB = 1024n;
const MiB = 1024n * KiB;
const GiB = 1024n * MiB;

const sha256 = (file: string): string => createHash('sha256').update(readFileSync(file)).digest('hex');

async function snapshot(uri: vscode.Uri): Promise<ViewerSnapshot | undefined> {
  return decodeSnapshot(await vscode.commands.executeCommand('cachewright.imageViewer.lastView', uri.toString()));
}

/** Opens the image in the viewer and waits until the webview has drawn a finished view of it. */
async function openImage(file: string, until: (view: ImageView) => boolean = (v) => v.state !== 'reading'): Promise<ViewerSnapshot> {
  const uri = vscode.Uri.file(file);
  await vscode.commands.executeCommand('vscode.openWith', uri, VIEW_TYPE);
  return waitFor(`the viewer to draw ${path.basename(file)}`, async () => {
    const shot = await snapshot(uri);
    return shot && until(shot.view) ? shot : undefined;
  }, 20_000);
}

describe('qcow2 image viewer', () => {
  let dir: string;
  let plain: WrittenImage;
  const plainClusters: ClusterSpec[] = [
    // 64 KiB clusters with 8-byte entries: 8192 entries per L2 table [SPEC], so these fall into the
    // tables of L1 entries 0, 2 and 5.
    { guest: 0, kind: 'data' },
    { guest: 1, kind: 'data' },
    { guest: 3, kind: 'compressed' },
    { guest: 4, kind: 'zero' },
    { guest: 2 * 8192 + 10, kind: 'data' },
    { guest: 5 * 8192 + 1, kind: 'zero' },
    { guest: 5 * 8192 + 2, kind: 'data' },
  ];

  before(async () => {
    await api();
    dir = mkdtempSync(path.join(tmpdir(), 'cachewright-viewer-'));
    plain = writeImage(path.join(dir, 'plain.qcow2'), { version: 3, clusterBits: 16, virtualSize: 8n * GiB, clusters: plainClusters });
  });

  afterEach(async () => {
    await vscode.commands.executeCommand('workbench.action.closeAllEditors');
  });

  it('opens a qcow2 image read-only in its own editor and leaves its bytes unchanged', async () => {
    const before = sha256(plain.path);
    const mtime = statSync(plain.path).mtimeMs;
    await openImage(plain.path);
    const tab = vscode.window.tabGroups.activeTabGroup.activeTab;
    assert.ok(tab?.input instanceof vscode.TabInputCustom, 'the active tab is a custom editor');
    assert.equal(tab.input.viewType, VIEW_TYPE);
    assert.equal(tab.isDirty, false);
    // Saving a read-only custom editor has nothing to write.
    await vscode.commands.executeCommand('workbench.action.files.save');
    assert.ok(!vscode.workspace.textDocuments.some((d) => d.uri.fsPath === plain.path), 'the image is not opened as a text document');
    await vscode.commands.executeCommand('workbench.action.closeAllEditors');
    assert.equal(sha256(plain.path), before, 'the file\'s bytes are unchanged');
    assert.equal(statSync(plain.path).mtimeMs, mtime, 'the file was not touched');
  });

  it('shows the header facts, the walk counts and the allocation picture', async () => {
    const { view, drawn } = await openImage(plain.path);
    assert.equal(view.state, 'done');
    const [top] = view.layers;
    assert.ok(top?.cost && top.notes && top.walked);
    assert.equal(top.cost.layout.formatVersion, 3);
    assert.equal(top.cost.layout.virtualSize, 8n * GiB);
    assert.equal(top.cost.layout.clusterSize, 64n * KiB); // cluster_bits 16 [SPEC]
    assert.equal(top.cost.layout.subclusters, 1);
    assert.equal(top.cost.layout.l2EntryWidth, 8); // standard L2 entries [SPEC]
    assert.equal(top.cost.layout.refcountWidth, 16); // refcount_order 4 [SPEC]
    assert.equal(top.notes.dirty, false);
    assert.equal(top.notes.corrupt, false);
    assert.equal(top.cost.allocation.l1Entries, plain.l1Entries);
    assert.equal(top.cost.allocation.l2Tables, plain.truth.l2TablesAllocated);
    assert.equal(top.cost.allocation.l2Tables, 3);
    assert.equal(top.cost.allocation.dataClusters, plain.truth.dataClustersAllocated);
    assert.equal(top.cost.allocation.compressedClusters, plain.truth.compressedClusters);
    assert.equal(top.cost.allocation.zeroClusters, plain.truth.zeroClusters);
    // The picture: every region the model has was drawn, and the first region holds data.
    assert.equal(drawn.state, 'done');
    assert.equal(drawn.mapRegions, top.cost.allocation.map?.data.length);
    assert.ok(drawn.mapRegions > 1);
    assert.ok((top.cost.allocation.map?.data[0] ?? 0) > 0);
    assert.ok((top.cost.allocation.map?.zero ?? []).some((share) => share > 0), 'zero clusters show in the map');
    assert.equal(drawn.progressShown, false);
  });

  it('recommends the L2 cache for the allocated tables now and full coverage once fully allocated', async () => {
    const { view, drawn } = await openImage(plain.path);
    const caches = view.layers[0]?.cost?.caches.choices;
    assert.ok(caches?.allocated);
    // One L2 table is one cluster [SPEC]: 3 allocated tables take 3 x 64 KiB.
    assert.equal(caches.allocated.l2, 192n * KiB);
    // docs/sources.md check values (common practice): 8 GiB with 64 KiB clusters needs a 1 MiB L2 cache.
    assert.equal(caches.wholeDisk.l2, 1n * MiB);
    assert.equal(caches.wholeDisk.l2Covered, 8n * GiB);
    // [CACHE] the refcount cache defaults to 4 clusters; 256 KiB with 16-bit refcounts covers 8 GiB.
    assert.equal(caches.wholeDisk.refcount, 256n * KiB);
    assert.equal(caches.wholeDisk.refcountCovered, 8n * GiB);
    // [CACHE] the current driver on Linux: up to 32 MiB, never above full coverage.
    assert.equal(caches.default.l2, 1n * MiB);
    assert.ok(view.chain);
    assert.equal(view.chain.allocated, 192n * KiB + 256n * KiB);
    assert.equal(view.chain.wholeDisk, 1n * MiB + 256n * KiB);
    assert.equal(view.chain.layersSized, 1);
    assert.equal(drawn.cacheRows, 4, 'the caches group of the one layer: tables present, whole disk, default L2, default refcount');
    // docs/sources.md cautions: reopen, host memory per layer, fixed at creation, for review.
    assert.equal(view.cautions.length, 4);
    assert.ok(view.cautions.some((c) => /opened/.test(c)));
    assert.ok(view.cautions.some((c) => /per backing layer/.test(c)));
  });

  it('recomputes the caches for another driver profile without reading the image again', async () => {
    const big = writeImage(path.join(dir, 'profiles.qcow2'), { version: 3, clusterBits: 16, virtualSize: 256n * GiB, clusters: [{ guest: 0, kind: 'data' }] });
    const uri = vscode.Uri.file(big.path);
    const first = await openImage(big.path);
    // docs/sources.md check values (common practice): 256 GiB with 64 KiB clusters needs 32 MiB for full coverage.
    assert.equal(first.view.layers[0]?.cost?.caches.choices.wholeDisk.l2, 32n * MiB);
    // [CACHE] current driver on Linux: up to 32 MiB.
    assert.deepEqual(first.view.profileChoice, { generation: 'current', platform: 'linux' });
    assert.equal(first.view.layers[0]?.cost?.caches.choices.default.l2, 32n * MiB);

    const pick = async (generation: string, platform: string): Promise<ViewerSnapshot> => {
      assert.equal(await vscode.commands.executeCommand('cachewright.imageViewer.setProfile', uri.toString(), { generation, platform }), true);
      return waitFor(`the ${generation}/${platform} profile drawn`, async () => {
        const shot = await snapshot(uri);
        return shot?.view.profileChoice.generation === generation && shot.view.profileChoice.platform === platform ? shot : undefined;
      });
    };
    // [CACHE] current driver elsewhere: up to 8 MiB.
    const other = await pick('current', 'other');
    assert.equal(other.view.layers[0]?.cost?.caches.choices.default.l2, 8n * MiB);
    // [CACHE] legacy driver: a 1 MiB L2 cache and a refcount cache a quarter of the L2 cache.
    const legacy = await pick('legacy', 'linux');
    assert.equal(legacy.view.layers[0]?.cost?.caches.choices.default.l2, 1n * MiB);
    assert.equal(legacy.view.layers[0]?.cost?.caches.choices.default.refcount, 256n * KiB);
    assert.equal(legacy.view.layers[0]?.cost?.caches.choices.wholeDisk.refcount, 8n * MiB);
    assert.equal(legacy.view.layers[0]?.cost?.caches.choices.wholeDisk.l2, 32n * MiB, 'full coverage does not depend on the driver');
    assert.equal(legacy.progressReports, first.progressReports, 'the image was not walked again');
    assert.equal(legacy.view.state, 'done');
  });

  it('sizes every layer of a backing chain with its own cluster size and sums the memory', async () => {
    const base = writeImage(path.join(dir, 'chain-base.qcow2'), { version: 3, clusterBits: 20, virtualSize: 4n * GiB, clusters: [{ guest: 0, kind: 'data' }], seed: 2 });
    const overlay = writeImage(path.join(dir, 'chain-top.qcow2'), {
      version: 3, clusterBits: 16, virtualSize: 4n * GiB, backing: { name: 'chain-base.qcow2', format: 'qcow2' },
      clusters: [{ guest: 7, kind: 'data' }],
    });
    const { view, drawn } = await openImage(overlay.path);
    assert.equal(view.state, 'done');
    assert.equal(view.layers.length, 2);
    const [top, back] = view.layers;
    assert.equal(top?.cost?.layout.clusterSize, 64n * KiB);
    assert.equal(top?.notes?.backing, 'chain-base.qcow2');
    assert.equal(top?.notes?.backingFormat, 'qcow2');
    assert.equal(back?.path, base.path, 'the backing name resolves relative to the image\'s folder');
    assert.equal(back?.name, 'chain-base.qcow2');
    assert.equal(back?.cost?.layout.clusterSize, 1n * MiB);
    assert.equal(back?.cost?.allocation.l2Tables, base.truth.l2TablesAllocated);
    // Overlay [CACHE]: 4 GiB / 64 KiB x 8 B = 512 KiB full coverage; refcount 4 x 64 KiB.
    assert.equal(top?.cost?.caches.choices.wholeDisk.l2, 512n * KiB);
    // Base [CACHE]: 4 GiB / 1 MiB x 8 B = 32 KiB of entries, one whole 1 MiB table, but the L2 cache
    // holds at least 2 entries (2 MiB); the refcount cache at least 4 clusters (4 MiB).
    assert.equal(back?.cost?.caches.choices.wholeDisk.l2, 2n * MiB);
    assert.equal(back?.cost?.caches.choices.wholeDisk.refcount, 4n * MiB);
    // Each layer has its own caches; the chain costs their sum [CACHE].
    assert.equal(view.chain?.wholeDisk, 512n * KiB + 256n * KiB + 2n * MiB + 4n * MiB);
    assert.equal(view.chain?.layersSized, 2);
    assert.equal(drawn.layers, 2);
    assert.equal(drawn.cacheRows, 12, 'four rows in each layer\'s caches group and four for the chain\'s sum');
  });

  it('shows a missing backing file plainly', async () => {
    const lost = writeImage(path.join(dir, 'lost-backing.qcow2'), {
      version: 3, clusterBits: 16, virtualSize: 1n * GiB, backing: { name: 'no-such-base.qcow2', format: 'qcow2' },
      clusters: [{ guest: 0, kind: 'data' }],
    });
    const { view, drawn } = await openImage(lost.path);
    assert.equal(view.state, 'failed');
    assert.equal(drawn.state, 'failed');
    const missing = view.layers[1];
    assert.equal(missing?.error?.kind, 'missing');
    assert.match(missing?.error?.message ?? '', /no-such-base\.qcow2/);
    assert.match(view.status, /Backing layer 1 could not be read \(missing file\)/);
    // The image itself was still read and sized.
    assert.equal(view.layers[0]?.cost?.allocation.l2Tables, lost.truth.l2TablesAllocated);
    assert.equal(view.chain?.layersSized, 1);
    assert.equal(view.chain?.layers, 2);
  });

  it('shows a backing cycle plainly', async () => {
    const spec = (backing: string) => ({ version: 3 as const, clusterBits: 16, virtualSize: 1n * GiB, backing: { name: backing, format: 'qcow2' }, clusters: [] });
    writeImage(path.join(dir, 'loop-a.qcow2'), spec('loop-b.qcow2'));
    writeImage(path.join(dir, 'loop-b.qcow2'), spec('loop-a.qcow2'));
    const { view } = await openImage(path.join(dir, 'loop-a.qcow2'));
    assert.equal(view.state, 'failed');
    const cyclic = view.layers.find((l) => l.error);
    assert.equal(cyclic?.error?.kind, 'cycle');
    assert.match(view.status, /could not be read \(backing cycle\)/);
    assert.equal(view.layers[1]?.notes?.backing, 'loop-a.qcow2');
  });

  it('says plainly that a text file or an empty file named .qcow2 is not an image', async () => {
    const text = path.join(dir, 'notes.qcow2');
    writeFileSync(text, 'disk notes for the tern hosts\n');
    const empty = path.join(dir, 'empty.qcow2');
    writeFileSync(empty, '');
    for (const file of [text, empty]) {
      const before = sha256(file);
      const { view, drawn } = await openImage(file);
      assert.equal(view.state, 'failed');
      assert.equal(drawn.state, 'failed');
      assert.equal(view.layers[0]?.error?.kind, 'not-qcow2');
      assert.match(view.status, /The image could not be read \(not a qcow2 image\)/);
      assert.equal(view.layers[0]?.cost, null);
      assert.equal(view.chain, null, 'nothing to size');
      assert.equal(drawn.mapRegions, 0);
      assert.equal(sha256(file), before);
      await vscode.commands.executeCommand('workbench.action.closeAllEditors');
    }
  });

  it('counts subclusters of an extended L2 image', async () => {
    const ext = writeImage(path.join(dir, 'extended.qcow2'), {
      version: 3, clusterBits: 16, virtualSize: 1n * GiB, extendedL2: true,
      clusters: [{ guest: 3, kind: 'data', allocatedMask: 0x0000ffff, zeroMask: 0xffff0000 }],
    });
    const { view } = await openImage(ext.path);
    const top = view.layers[0];
    assert.equal(top?.cost?.layout.subclusters, 32);
    assert.equal(top?.cost?.layout.l2EntryWidth, 16);
    // [SPEC] extended L2: 32 subclusters per cluster.
    assert.equal((top?.cost?.layout.clusterSize ?? 0n) / 32n, 2n * KiB);
    assert.equal(top?.cost?.allocation.subclustersAllocated, ext.truth.subclustersAllocated);
    assert.equal(top?.cost?.allocation.subclustersZero, ext.truth.subclustersZero);
    // docs/sources.md: 16-byte entries; 1 GiB / 64 KiB x 16 B = 256 KiB.
    assert.equal(top?.cost?.caches.choices.wholeDisk.l2, 256n * KiB);
  });

  it('reports progress, stops mid-walk and reads again on request', async () => {
    // 512-byte clusters: 64 entries per L2 table [SPEC], so 64 MiB takes 2,048 tables, one data
    // cluster each: a walk long enough to report progress before it ends.
    const many = writeImage(path.join(dir, 'many-tables.qcow2'), {
      version: 3, clusterBits: 9, virtualSize: 64n * MiB, writeData: false,
      clusters: Array.from({ length: 2048 }, (_, t) => ({ guest: t * 64, kind: 'data' as const })),
    });
    const uri = vscode.Uri.file(many.path);
    await vscode.commands.executeCommand('cachewright.imageViewer.stopAtFirstProgress', uri.toString());
    const stopped = await openImage(many.path);
    assert.equal(stopped.view.state, 'cancelled');
    assert.equal(stopped.drawn.state, 'cancelled');
    assert.ok(stopped.progressReports >= 1, 'the walk reported progress');
    assert.ok(stopped.view.progress && stopped.view.progress.l1Done < stopped.view.progress.l1Total, 'it stopped before the end of the L1 table');
    assert.equal(stopped.view.layers[0]?.cost?.layout.clusterSize, 512n, 'header facts stay after a stop');
    assert.equal(stopped.view.layers[0]?.walked, false, 'the stopped layer has no walk counts');
    assert.equal(stopped.view.layers[0]?.cost?.allocation.l2Tables, null);

    await vscode.commands.executeCommand('cachewright.imageViewer.reread', uri.toString());
    const done = await waitFor('the second read', async () => {
      const shot = await snapshot(uri);
      return shot?.view.state === 'done' ? shot : undefined;
    }, 20_000);
    assert.equal(done.view.layers[0]?.cost?.allocation.l2Tables, many.truth.l2TablesAllocated);
    assert.equal(done.view.layers[0]?.cost?.allocation.l2Tables, 2048);
    // 2,048 tables of one cluster each [SPEC].
    assert.equal(done.view.layers[0]?.cost?.caches.choices.allocated?.l2, 2048n * 512n);
  });

  it('says when the file changed on disk after it was read, and reads it afresh', async () => {
    const file = path.join(dir, 'changing.qcow2');
    const first = writeImage(file, { version: 3, clusterBits: 16, virtualSize: 2n * GiB, clusters: [{ guest: 0, kind: 'data' }] });
    const uri = vscode.Uri.file(file);
    const read = await openImage(file);
    assert.equal(read.view.layers[0]?.cost?.allocation.l2Tables, first.truth.l2TablesAllocated);
    assert.equal(read.view.changedOnDisk, null);
    // The guest writes into two more L2 tables' ranges (8192 clusters per table [SPEC]).
    const second = writeImage(file, {
      version: 3, clusterBits: 16, virtualSize: 2n * GiB,
      clusters: [{ guest: 0, kind: 'data' }, { guest: 8192, kind: 'data' }, { guest: 3 * 8192, kind: 'data' }],
    });
    const stale = await waitFor('the changed-on-disk notice', async () => {
      const shot = await snapshot(uri);
      return shot?.view.changedOnDisk === 'changed' && shot.drawn.changedNotice ? shot : undefined;
    }, 15_000);
    assert.equal(stale.view.layers[0]?.cost?.allocation.l2Tables, first.truth.l2TablesAllocated, 'the old numbers stay until read again');
    await vscode.commands.executeCommand('cachewright.imageViewer.reread', uri.toString());
    const fresh = await waitFor('the fresh read', async () => {
      const shot = await snapshot(uri);
      return shot?.view.state === 'done' && shot.view.changedOnDisk === null ? shot : undefined;
    }, 15_000);
    assert.equal(fresh.view.layers[0]?.cost?.allocation.l2Tables, second.truth.l2TablesAllocated);
    assert.equal(fresh.view.layers[0]?.cost?.allocation.l2Tables, 3);
    assert.equal(fresh.drawn.changedNotice, false);
  });

  it('follows the editor\'s colour theme, with outlines in high contrast', async () => {
    const uri = vscode.Uri.file(plain.path);
    await openImage(plain.path);
    const workbench = vscode.workspace.getConfiguration('workbench');
    const before = workbench.inspect<string>('colorTheme')?.globalValue;
    const seen = new Map<string, ViewerSnapshot['drawn']['theme']>();
    try {
      for (const [theme, kind] of [['Default Dark Modern', 'vscode-dark'], ['Default High Contrast', 'vscode-high-contrast'], ['Default Light Modern', 'vscode-light']] as const) {
        await workbench.update('colorTheme', theme, vscode.ConfigurationTarget.Global);
        const shot = await waitFor(`the viewer in ${theme}`, async () => {
          const s = await snapshot(uri);
          return s?.drawn.theme.kind === kind ? s : undefined;
        }, 15_000);
        seen.set(kind, shot.drawn.theme);
      }
    } finally {
      await workbench.update('colorTheme', before, vscode.ConfigurationTarget.Global);
    }
    const dark = seen.get('vscode-dark');
    const light = seen.get('vscode-light');
    const contrast = seen.get('vscode-high-contrast');
    assert.ok(dark && light && contrast);
    assert.notEqual(dark.background, light.background, 'the background comes from the theme');
    assert.ok(dark.dataFill && light.dataFill, 'the data columns take a colour from the theme');
    assert.ok(contrast.cellStroke !== 'none' && contrast.cellStroke !== '', `high contrast outlines the map's cells (stroke ${contrast.cellStroke})`);
    assert.equal(light.cellStroke, 'none', 'other themes draw no outline');
  });

  it('follows the demo fleet\'s overlay to its golden image', async () => {
    const overlay = demoFile('images/tern-db-root.qcow2');
    const before = sha256(overlay.fsPath);
    const { view } = await openImage(overlay.fsPath);
    assert.equal(view.state, 'done');
    assert.equal(view.layers.length, 2);
    assert.equal(path.basename(view.layers[1]?.path ?? ''), 'tern-golden.qcow2');
    assert.ok(view.chain && view.chain.layersSized === 2);
    assert.equal(sha256(overlay.fsPath), before);
  });
});
