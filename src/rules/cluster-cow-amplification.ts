import { CAUTIONS } from '../core/cautions';
import { KiB, writeAmplification } from '../core/sizing';
import { isSequential } from '../core/workload';
import { factor, size } from './format';
import { declareRule } from './types';
import { say } from './wording';

/** Above this allocation unit, small first writes copy far more than they write (common practice). */
const LARGE_UNIT = 64n * KiB;

const WORDING = {
  firstWritesFill: '{pattern} {request} writes on {units}: each first write into unallocated space fills {moved} ({ratio}x the data written). {remedy} keeps first writes small. {caution}',
  subclusters: 'subclusters of {unit}',
  clusters: '{cluster} clusters',
  smallerCluster: 'A smaller cluster',
  smallerClusterOrExtended: 'A smaller cluster, or extended L2 (32 subclusters per cluster),',
} as const;

export const clusterCowAmplification = declareRule({
  id: 'cluster-cow-amplification',
  severity: 'warning',
  description: 'Small random writes on clusters (or subclusters) above 64 KiB fill a whole allocation unit on first write.',
  fixable: false,
  wording: WORDING,
  checkDisk({ disk, top, requestSize, pattern, report }) {
    if (isSequential(pattern)) return;
    const { clusterSize, extendedL2 } = top.geometry;
    const amplification = writeAmplification(requestSize, clusterSize, extendedL2);
    if (amplification.unit <= LARGE_UNIT || requestSize >= amplification.unit) return;
    const units = extendedL2 ? say(WORDING, 'subclusters', { unit: size(amplification.unit) }) : say(WORDING, 'clusters', { cluster: size(clusterSize) });
    report({
      // Point at what sets the cluster: the definition's value, or the image file when that is where it comes from.
      at: disk.values.clusterSize?.value === clusterSize ? 'clusterSize' : disk.values.image ? 'image' : undefined,
      says: 'firstWritesFill',
      fill: {
        pattern,
        request: size(requestSize),
        units,
        moved: size(amplification.bytesMoved),
        ratio: factor(amplification.ratio),
        remedy: say(WORDING, extendedL2 ? 'smallerCluster' : 'smallerClusterOrExtended'),
        caution: CAUTIONS.fixedAtCreation,
      },
    });
  },
});
