import { CAUTIONS } from '../core/cautions';
import { KiB, writeAmplification } from '../core/sizing';
import { isSequential } from '../core/workload';
import { factor, size } from './format';
import { declareRule } from './types';

/** Above this allocation unit, small first writes copy far more than they write (common practice). */
const LARGE_UNIT = 64n * KiB;

const WORDING = {
  firstWritesFill: '{pattern} {request} writes on {cluster} clusters: each first write into unallocated space fills {moved} ({ratio}x the data written). A smaller cluster, or extended L2 (32 subclusters per cluster), keeps first writes small. {caution}',
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
    // With extended L2 the unit is a subcluster, at most 2 MiB / 32 = 64 KiB [SPEC]: never above the line.
    if (amplification.unit <= LARGE_UNIT || requestSize >= amplification.unit) return;
    report({
      // Point at what sets the cluster: the definition's value, or the image file when that is where it comes from.
      at: disk.values.clusterSize?.value === clusterSize ? 'clusterSize' : disk.values.image ? 'image' : undefined,
      says: 'firstWritesFill',
      fill: {
        pattern,
        request: size(requestSize),
        cluster: size(clusterSize),
        moved: size(amplification.bytesMoved),
        ratio: factor(amplification.ratio),
        caution: CAUTIONS.fixedAtCreation,
      },
    });
  },
});
