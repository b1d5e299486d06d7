import { CAUTIONS } from '../core/cautions';
import { KiB, writeAmplification } from '../core/sizing';
import { isSequential } from '../core/workload';
import { size } from './format';
import { docsPage, type Rule } from './types';

/** Above this allocation unit, small first writes copy far more than they write (common practice). */
const LARGE_UNIT = 64n * KiB;

export const clusterCowAmplification: Rule<'cluster-cow-amplification'> = {
  id: 'cluster-cow-amplification',
  severity: 'warning',
  description: 'Small random writes on clusters (or subclusters) above 64 KiB fill a whole allocation unit on first write.',
  fixable: false,
  docs: docsPage('cluster-cow-amplification'),
  checkDisk({ disk, top, requestSize, pattern, report }) {
    if (isSequential(pattern)) return;
    const { clusterSize, extendedL2 } = top.geometry;
    const amplification = writeAmplification(requestSize, clusterSize, extendedL2);
    if (amplification.unit <= LARGE_UNIT || requestSize >= amplification.unit) return;
    const unitName = extendedL2 ? `subclusters of ${size(amplification.unit)}` : `${size(clusterSize)} clusters`;
    report({
      // Point at what sets the cluster: the definition's value, or the image file when that is where it comes from.
      at: disk.values.clusterSize?.value === clusterSize ? 'clusterSize' : disk.values.image ? 'image' : undefined,
      message: `${pattern} ${size(requestSize)} writes on ${unitName}: each first write into unallocated space fills ${size(amplification.bytesMoved)} (${amplification.ratio}x the data written). ${extendedL2 ? 'A smaller cluster' : 'A smaller cluster, or extended L2 (32 subclusters per cluster),'} keeps first writes small. ${CAUTIONS.fixedAtCreation}`,
    });
  },
};
