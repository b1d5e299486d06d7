// Regenerates the demo fleet's qcow2 images (examples/images) with the test suite's writer, which
// builds images from the format specification. Run: npx tsx scripts/make-demo-images.ts
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { writeImage, type ClusterSpec } from '../test/image/qcow2-writer';

const dir = join(__dirname, '..', 'examples', 'images');
mkdirSync(dir, { recursive: true });
const GiB = 1024n ** 3n;

/** Every `step`-th guest cluster, `count` of them: a sparse image with a spread of L2 tables. */
const spread = (count: number, step: number, kind: ClusterSpec['kind'] = 'data'): ClusterSpec[] =>
  Array.from({ length: count }, (_, i) => ({ guest: i * step, kind }));

// The ticketing database's base image and its overlay (a two-layer chain).
writeImage(join(dir, 'tern-golden.qcow2'), { version: 3, clusterBits: 16, virtualSize: 40n * GiB, clusters: spread(24, 4096), seed: 1, writeData: false });
writeImage(join(dir, 'tern-db-root.qcow2'), {
  version: 3, clusterBits: 16, virtualSize: 40n * GiB, clusters: spread(6, 12288), seed: 2, writeData: false,
  backing: { name: 'tern-golden.qcow2', format: 'qcow2' },
});
// Created with 1 MiB clusters, though its definition says otherwise.
writeImage(join(dir, 'gull-app-02-root.qcow2'), { version: 3, clusterBits: 20, virtualSize: 64n * GiB, clusters: spread(3, 8192), seed: 3, writeData: false });
