// The reader against the test writer's ground truth. The writer follows the qcow2 specification
// [SPEC]; its images are cross-checked by python3-libqcow in libqcow.test.ts (except extended L2,
// which that reader does not support: those images are checked here against the bit layout the
// specification gives for extended L2 entries).
import { strict as assert } from 'node:assert';
import { readFileSync, writeFileSync } from 'node:fs';
import { FileByteSource, inspectImage, readHeader } from '../../src/image';
import { tempFolder } from './helpers';
import { writeImage, type ClusterSpec, type ImageSpec } from './qcow2-writer';

const KiB = 1024n;
const MiB = 1024n * KiB;
const GiB = 1024n * MiB;

describe('image reader against the writer ground truth', function () {
  this.timeout(60000);
  const folder = tempFolder('reader');
  after(() => folder.remove());
  let n = 0;
  const write = (spec: ImageSpec) => writeImage(folder.file(`image-${n++}.qcow2`), spec);

  describe('header fields [SPEC "Header"]', () => {
    for (const version of [2, 3] as const) {
      for (const clusterBits of [9, 12, 16, 21]) {
        for (const refcountOrder of version === 2 ? [4] : [3, 4, 6]) {
          it(`v${version}, cluster_bits ${clusterBits}, refcount_order ${refcountOrder}`, async () => {
            const cluster = 2 ** clusterBits;
            const virtualSize = BigInt(cluster) * BigInt(cluster / 8) * 3n + 512n; // a partial last cluster
            const guestClusters = Number((virtualSize + BigInt(cluster) - 1n) / BigInt(cluster));
            const clusters: ClusterSpec[] = [
              { guest: 0, kind: 'data' },
              { guest: 2, kind: 'compressed' },
              ...(version === 3 ? [{ guest: 5, kind: 'zero' as const }, { guest: 6, kind: 'zero' as const, preallocated: true }] : []),
              { guest: cluster / 8 + 1, kind: 'data' },
              { guest: guestClusters - 1, kind: 'data' },
            ];
            const image = write({ version, clusterBits, virtualSize, refcountOrder, clusters });
            const report = await inspectImage(image.path);
            assert.equal(report.error, undefined, report.error);
            assert.equal(report.version, version);
            assert.equal(report.virtualSize, virtualSize);
            assert.equal(report.clusterSize, BigInt(cluster));
            // [SPEC] refcount_bits = 1 << refcount_order; version 2 is always 16
            assert.equal(report.refcountBits, 2 ** refcountOrder);
            assert.equal(report.extendedL2, false);
            assert.equal(report.l1Entries, image.l1Entries);
            assert.equal(report.l2TablesAllocated, image.truth.l2TablesAllocated);
            assert.equal(report.dataClustersAllocated, image.truth.dataClustersAllocated);
            assert.equal(report.compressedClusters, image.truth.compressedClusters);
            assert.equal(report.zeroClusters, image.truth.zeroClusters);
            assert.equal(report.l2AllocatedCoverage, BigInt(image.truth.l2TablesAllocated * cluster));
            assert.deepEqual(report.warnings, []);
          });
        }
      }
    }

    it('reads header extensions: backing format, feature names; skips unknown ones [SPEC "Header extensions"]', async () => {
      const base = write({ version: 3, clusterBits: 16, virtualSize: GiB, clusters: [] });
      const image = writeImage(folder.file('ext.qcow2'), {
        version: 3,
        clusterBits: 16,
        virtualSize: GiB,
        clusters: [],
        backing: { name: base.path.split('/').pop()!, format: 'qcow2' },
        featureNames: [{ kind: 0, bit: 0, name: 'dirty bit' }, { kind: 1, bit: 0, name: 'lazy refcounts' }],
        unknownExtensions: [{ type: 0x12345678, data: new Uint8Array([1, 2, 3]) }],
        dirty: true,
      });
      const source = await FileByteSource.open(image.path);
      const header = await readHeader(source);
      await source.close();
      assert.equal(header.backingFormat, 'qcow2');
      assert.equal(header.backingFile, base.path.split('/').pop());
      assert.deepEqual(header.featureNames, [{ kind: 'incompatible', bit: 0, name: 'dirty bit' }, { kind: 'compatible', bit: 0, name: 'lazy refcounts' }]);
      assert.deepEqual(header.extensionTypes, [0xe2792aca, 0x6803f857, 0x12345678]);
      assert.equal(header.dirty, true);
      const report = await inspectImage(image.path);
      assert.equal(report.dirty, true);
      assert.equal(report.chain.length, 1);
      assert.equal(report.chain[0]!.error, undefined);
    });
  });

  describe('feature bits [SPEC "incompatible_features"]', () => {
    const patched = (spec: ImageSpec, patch: (b: Buffer, image: ReturnType<typeof writeImage>) => void): string => {
      const image = write(spec);
      const bytes = readFileSync(image.path);
      patch(bytes, image);
      writeFileSync(image.path, bytes);
      return image.path;
    };

    it('bit 1 corrupt, bit 3 compression type with compression_type 1 (zstd)', async () => {
      const path = patched({ version: 3, clusterBits: 16, virtualSize: GiB, clusters: [], extraIncompatible: (1n << 1n) | (1n << 3n) }, (b) => { b[104] = 1; });
      const report = await inspectImage(path);
      assert.equal(report.error, undefined, report.error);
      assert.equal(report.corrupt, true);
      assert.equal(report.compressionType, 'zstd');
    });

    it('bit 3 without a compression type is malformed', async () => {
      const path = write({ version: 3, clusterBits: 16, virtualSize: GiB, clusters: [], extraIncompatible: 1n << 3n }).path;
      assert.match((await inspectImage(path)).error!, /compression type feature bit is set but the compression_type field is missing or zero/);
    });

    it('bit 2 external data file: the name from its extension, data offsets not held to this file', async () => {
      const path = patched(
        { version: 3, clusterBits: 16, virtualSize: GiB, clusters: [{ guest: 0, kind: 'data' }], extraIncompatible: 1n << 2n, unknownExtensions: [{ type: 0x44415441, data: new TextEncoder().encode('root.data') }] },
        // [SPEC] with an external data file the host offset is the guest offset, anywhere in that file
        (b, image) => { b.writeBigUInt64BE((1n << 63n) | (1n << 40n), image.l2Tables.get(0)!); },
      );
      const report = await inspectImage(path);
      assert.equal(report.error, undefined, report.error);
      assert.equal(report.externalDataFile, 'root.data');
      assert.equal(report.dataClustersAllocated, 1);
    });
  });

  describe('cache coverage [CACHE]', () => {
    it('l2FullCoverage follows the docs/sources.md check values: 20 GiB at 64 KiB -> 2.5 MiB (common practice)', async () => {
      const image = write({ version: 3, clusterBits: 16, virtualSize: 20n * GiB, clusters: [{ guest: 0, kind: 'data' }, { guest: 300000, kind: 'data' }] });
      const report = await inspectImage(image.path);
      assert.equal(report.l2FullCoverage, 2560n * KiB);
      // two tables allocated, each one 64 KiB cluster
      assert.equal(report.l2TablesAllocated, 2);
      assert.equal(report.l2AllocatedCoverage, 128n * KiB);
    });

    it('1 TiB at 2 MiB clusters: full coverage 4 MiB (docs/sources.md check values, common practice)', async () => {
      const image = write({ version: 3, clusterBits: 21, virtualSize: 1024n * GiB, clusters: [{ guest: 262143, kind: 'data' }], writeData: false });
      const report = await inspectImage(image.path);
      assert.equal(report.l2FullCoverage, 4n * MiB);
      assert.equal(report.l2AllocatedCoverage, 2n * MiB);
    });
  });

  describe('allocation map', () => {
    it('gives the allocated share of each region of the virtual disk', async () => {
      // 1 GiB, 64 KiB clusters, 64 regions of 16 MiB = 256 clusters each.
      const clusters: ClusterSpec[] = [];
      for (let g = 0; g < 256; g++) clusters.push({ guest: g, kind: 'data' });
      for (let g = 5 * 256; g < 5 * 256 + 128; g++) clusters.push({ guest: g, kind: 'data' });
      for (let g = 10 * 256; g < 10 * 256 + 64; g++) clusters.push({ guest: g, kind: 'zero' });
      const image = write({ version: 3, clusterBits: 16, virtualSize: GiB, clusters, writeData: false });
      const report = await inspectImage(image.path);
      const map = report.allocation!;
      assert.equal(map.regionBytes, 16n * MiB);
      assert.equal(map.data.length, 64);
      assert.equal(map.data[0], 1);
      assert.equal(map.data[5], 0.5);
      assert.equal(map.zero[10], 0.25);
      assert.equal(map.data.reduce((a, b) => a + b, 0), 1.5);
      assert.equal(report.allocatedBytes, 384n * 64n * KiB);
    });

    it('never makes a region smaller than one cluster', async () => {
      const image = write({ version: 3, clusterBits: 16, virtualSize: 3n * 64n * KiB, clusters: [{ guest: 1, kind: 'data' }] });
      const report = await inspectImage(image.path, { buckets: 64 });
      assert.deepEqual(report.allocation!.data, [0, 1, 0]);
    });
  });

  describe('extended L2 entries [SPEC "Extended L2 Entries"] (libqcow cannot read these: checked against the bit layout)', () => {
    for (const clusterBits of [14, 16, 21]) {
      it(`cluster_bits ${clusterBits}: subclusters counted per the allocation bitmap`, async () => {
        const cluster = 2 ** clusterBits;
        const entriesPerTable = cluster / 16; // [SPEC] extended entries are 128 bits
        const virtualSize = BigInt(cluster) * BigInt(entriesPerTable) * 2n;
        const clusters: ClusterSpec[] = [
          { guest: 0, kind: 'data', allocatedMask: 0xffffffff },
          { guest: 1, kind: 'data', allocatedMask: 0x0000000f, zeroMask: 0xf0000000 },
          { guest: 2, kind: 'data', allocatedMask: 0, zeroMask: 0xffffffff },
          { guest: 3, kind: 'compressed' },
          { guest: entriesPerTable + 1, kind: 'data', allocatedMask: 0x80000001 },
        ];
        const image = write({ version: 3, clusterBits, virtualSize, extendedL2: true, clusters });

        // The writer against the specification's layout, read straight from the file: the entry's
        // second 64 bits hold allocation status in bits 0-31 and "reads as zeros" in bits 32-63.
        const file = readFileSync(image.path);
        const table = image.l2Tables.get(0)!;
        const bitmap = (index: number): bigint => file.readBigUInt64BE(table + index * 16 + 8);
        assert.equal(bitmap(1) & 0xffffffffn, 0x0000000fn);
        assert.equal(bitmap(1) >> 32n, 0xf0000000n);
        assert.equal(bitmap(2) & 0xffffffffn, 0n);
        assert.equal(file.readBigUInt64BE(table + 3 * 16) >> 62n, 1n, 'bit 62: compressed');
        assert.equal(bitmap(3), 0n, 'compressed clusters have no subcluster bitmap');
        const header = file.readBigUInt64BE(72);
        assert.equal((header >> 4n) & 1n, 1n, 'incompatible feature bit 4: extended L2');

        const report = await inspectImage(image.path);
        assert.equal(report.error, undefined, report.error);
        assert.equal(report.extendedL2, true);
        assert.equal(report.subclustersAllocated, 32 + 4 + 2);
        assert.equal(report.subclustersZero, 4 + 32);
        assert.equal(report.subclustersAllocated, image.truth.subclustersAllocated);
        assert.equal(report.dataClustersAllocated, image.truth.dataClustersAllocated);
        assert.equal(report.compressedClusters, 1);
        // [CACHE] 16-byte entries double the full-coverage cache
        assert.equal(report.l2FullCoverage, BigInt(cluster) * 2n);
        const sub = BigInt(cluster / 32);
        assert.equal(report.allocatedBytes, sub * (32n + 4n + 2n) + BigInt(cluster));
      });
    }

    it('rejects extended L2 with clusters below 16 KiB [SPEC: cluster_bits at least 14]', async () => {
      const image = write({ version: 3, clusterBits: 13, virtualSize: GiB, extendedL2: true, clusters: [] });
      const report = await inspectImage(image.path);
      assert.equal(report.errorKind, 'malformed');
      assert.match(report.error!, /extended L2 entries need clusters of at least 16 KiB/);
    });
  });

  describe('zero flag [SPEC "Standard Cluster Descriptor" bit 0]', () => {
    it('counts a zero cluster with and without a preallocated host cluster, not as data', async () => {
      const image = write({ version: 3, clusterBits: 16, virtualSize: GiB, clusters: [{ guest: 1, kind: 'zero' }, { guest: 2, kind: 'zero', preallocated: true }, { guest: 3, kind: 'data' }] });
      const report = await inspectImage(image.path);
      assert.equal(report.zeroClusters, 2);
      assert.equal(report.dataClustersAllocated, 1);
    });
  });

  describe('read modes', () => {
    it('blocking and thread-pool reads give the same report', async () => {
      const clusters: ClusterSpec[] = [];
      for (let t = 0; t < 40; t++) clusters.push({ guest: t * 8192 + t, kind: t % 5 === 0 ? 'compressed' : t % 7 === 0 ? 'zero' : 'data' });
      const image = write({ version: 3, clusterBits: 16, virtualSize: 40n * 512n * MiB, clusters });
      const blocking = await inspectImage(image.path);
      const pooled = await inspectImage(image.path, { blockingReads: false });
      assert.deepEqual(pooled, blocking);
      assert.equal(blocking.l2TablesAllocated, 40);
    });
  });

  describe('concurrency', () => {
    it('walks running at the same time give the same reports as one after another', async () => {
      const images = [0, 1, 2].map((k) => {
        const clusters: ClusterSpec[] = [];
        // a different number of clusters per table in each image, so mixed-up buffers would show
        for (let t = 0; t < 300; t++) for (let c = 0; c <= k * 5; c++) clusters.push({ guest: t * 8192 + c * 7 + (t % 11), kind: 'data' });
        return write({ version: 3, clusterBits: 16, virtualSize: 300n * 512n * MiB, clusters, writeData: false }).path;
      });
      const sequential = [];
      for (const path of images) sequential.push(await inspectImage(path));
      assert.deepEqual(sequential.map((r) => r.dataClustersAllocated), [300, 1800, 3300]);
      for (const blockingReads of [true, false]) {
        const together = await Promise.all(images.map((path) => inspectImage(path, { blockingReads })));
        assert.deepEqual(together, sequential);
      }
    });
  });

  describe('progress and cancellation', () => {
    it('reports progress up to the end of the L1 table', async () => {
      const clusters: ClusterSpec[] = [];
      for (let t = 0; t < 200; t++) clusters.push({ guest: t * 8192, kind: 'data' });
      const image = write({ version: 3, clusterBits: 16, virtualSize: 200n * 512n * MiB, clusters, writeData: false });
      const seen: number[] = [];
      const report = await inspectImage(image.path, { onProgress: (p) => seen.push(p.l2TablesRead) });
      assert.equal(report.l2TablesAllocated, 200);
      assert.ok(seen.length >= 2);
      assert.equal(seen[seen.length - 1], 200);
      assert.deepEqual([...seen].sort((a, b) => a - b), seen, 'progress never goes back');
    });

    for (const blockingReads of [true, false]) it(`stops when the signal fires and says so (${blockingReads ? 'blocking' : 'thread-pool'} reads)`, async () => {
      const clusters: ClusterSpec[] = [];
      for (let t = 0; t < 300; t++) clusters.push({ guest: t * 8192, kind: 'data' });
      const image = write({ version: 3, clusterBits: 16, virtualSize: 300n * 512n * MiB, clusters, writeData: false });
      const controller = new AbortController();
      const report = await inspectImage(image.path, {
        blockingReads,
        signal: controller.signal,
        onProgress: (p) => { if (p.l2TablesRead >= 64) controller.abort(); },
      });
      assert.equal(report.errorKind, 'cancelled');
    });
  });
});
