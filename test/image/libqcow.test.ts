// The test writer's images, read back by an independent reader: Debian's python3-libqcow (pyqcow).
// Virtual size and the bytes at allocated, compressed, zero and unallocated offsets must match
// what the writer meant by the qcow2 specification [SPEC]. libqcow does not read images with
// extended L2 entries, so those are checked against the specification's bit layout in
// reader.test.ts instead. The libqcow release in Debian (20201213) also ignores the version 3 zero flag of
// an L2 entry that has no host cluster (it reads host offset 0, the header), so zero clusters here
// keep a preallocated host cluster (a hole: zeros either way); the bare zero flag is checked against
// the specification in reader.test.ts.
import { strict as assert } from 'node:assert';
import { expectedHex, libqcowRead, requireLibqcow, tempFolder } from './helpers';
import { writeImage, type ClusterSpec, type ImageSpec } from './qcow2-writer';

interface Case {
  label: string;
  spec: ImageSpec;
}

/** A sparse spread: first clusters, one per few tables, the last cluster; some compressed and zero. */
function sparseClusters(guestClusters: number, entriesPerTable: number, version: 2 | 3): ClusterSpec[] {
  const picks = new Map<number, ClusterSpec>();
  const add = (guest: number, kind: ClusterSpec['kind']): void => {
    if (guest >= 0 && guest < guestClusters && !picks.has(guest)) picks.set(guest, { guest, kind, preallocated: kind === 'zero' });
  };
  add(0, 'data');
  add(1, 'data');
  add(3, 'compressed');
  if (version === 3) add(4, 'zero');
  for (let g = entriesPerTable + 7; g < guestClusters; g += entriesPerTable * 3 + 5) add(g, 'data');
  add(Math.floor(guestClusters / 2), 'compressed');
  add(guestClusters - 1, 'data');
  return [...picks.values()];
}

const cases: Case[] = [];
for (const version of [2, 3] as const) {
  for (const clusterBits of [9, 12, 16, 21]) {
    const cluster = 2 ** clusterBits;
    const entriesPerTable = cluster / 8;
    // Several L2 tables for every cluster size; one 2 MiB-cluster table maps 512 GiB [SPEC].
    const virtualSize = BigInt(cluster) * BigInt(entriesPerTable) * 5n / 2n;
    const guestClusters = Number(virtualSize / BigInt(cluster));
    for (const refcountOrder of version === 2 ? [4] : [3, 4, 6]) {
      cases.push({
        label: `v${version}, ${cluster} B clusters, ${2 ** refcountOrder}-bit refcounts, ${virtualSize} B virtual`,
        spec: { version, clusterBits, virtualSize, refcountOrder, clusters: sparseClusters(guestClusters, entriesPerTable, version), seed: clusterBits + refcountOrder },
      });
    }
  }
}

function readsFor(spec: ImageSpec, cluster: number): Array<[number, number]> {
  const reads: Array<[number, number]> = [];
  const guestClusters = Number(spec.virtualSize / BigInt(cluster));
  const len = Math.min(64, cluster);
  for (const c of spec.clusters) {
    reads.push([c.guest * cluster, len]);
    reads.push([c.guest * cluster + cluster - len, len]);
    if (c.guest + 2 < guestClusters && !spec.clusters.some((o) => o.guest === c.guest + 2)) reads.push([(c.guest + 2) * cluster, len]);
  }
  reads.push([cluster * Math.floor(guestClusters / 3) + 100, len]);
  return reads;
}

describe('test writer images read by python3-libqcow (independent reference reader)', function () {
  this.timeout(120000);
  const folder = tempFolder('libqcow');
  after(() => folder.remove());

  it('reads every writer configuration with the expected virtual size and bytes', function () {
    requireLibqcow(this);
    const written = cases.map((c, i) => {
      const image = writeImage(folder.file(`case-${i}.qcow2`), c.spec);
      return { c, image, reads: readsFor(c.spec, image.clusterSize) };
    });
    const results = libqcowRead(written.map((w) => ({ chain: [w.image.path], reads: w.reads })));
    written.forEach((w, i) => {
      const result = results[i]!;
      assert.equal(result.error, undefined, `${w.c.label}: libqcow could not read it: ${result.error}`);
      assert.equal(BigInt(result.mediaSize!), w.c.spec.virtualSize, `${w.c.label}: virtual size`);
      w.reads.forEach(([offset, length], r) => {
        assert.equal(result.reads![r], expectedHex([{ image: w.image, virtualSize: w.c.spec.virtualSize }], offset, length), `${w.c.label}: bytes at ${offset}`);
      });
    });
  });

  it('refuses images with extended L2 entries (why those are checked against the specification instead)', function () {
    requireLibqcow(this);
    const image = writeImage(folder.file('extended.qcow2'), { version: 3, clusterBits: 16, virtualSize: 1n << 30n, extendedL2: true, clusters: [{ guest: 0, kind: 'data', allocatedMask: 1 }] });
    const [result] = libqcowRead([{ chain: [image.path], reads: [[0, 16]] }]);
    assert.match(result!.error ?? '', /unsupported incompatible features flags: 0x00000010/);
  });

  it('reads through a backing chain: unallocated clusters fall through, zero flags hide the backing', function () {
    requireLibqcow(this);
    const cluster = 65536;
    const virtualSize = 1n << 30n;
    const baseSpec: ImageSpec = { version: 2, clusterBits: 16, virtualSize, seed: 3, clusters: [0, 1, 2, 3, 100, 9000].map((guest) => ({ guest, kind: 'data' as const })) };
    const base = writeImage(folder.file('base.qcow2'), baseSpec);
    const midSpec: ImageSpec = { version: 3, clusterBits: 16, virtualSize, seed: 5, backing: { name: 'base.qcow2', format: 'qcow2' }, clusters: [{ guest: 1, kind: 'data' }, { guest: 2, kind: 'zero', preallocated: true }, { guest: 5000, kind: 'compressed' }] };
    const mid = writeImage(folder.file('mid.qcow2'), midSpec);
    const topSpec: ImageSpec = { version: 3, clusterBits: 16, virtualSize, seed: 7, backing: { name: 'mid.qcow2' }, clusters: [{ guest: 3, kind: 'data' }] };
    const top = writeImage(folder.file('top.qcow2'), topSpec);
    const reads: Array<[number, number]> = [0, 1, 2, 3, 4, 100, 5000, 9000, 16000].map((g) => [g * cluster + 8, 64]);
    const [result] = libqcowRead([{ chain: [top.path, mid.path, base.path], reads }]);
    assert.equal(result!.error, undefined, result!.error);
    assert.equal(BigInt(result!.mediaSize!), virtualSize);
    const chain = [{ image: top, virtualSize }, { image: mid, virtualSize }, { image: base, virtualSize }];
    reads.forEach(([offset, length], r) => assert.equal(result!.reads![r], expectedHex(chain, offset, length), `guest offset ${offset}`));
  });
});
