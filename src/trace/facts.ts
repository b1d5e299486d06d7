// A measured trace as the linter uses it (src/model/traces.ts): the hit ratio at a cache size and
// the smallest cache reaching a target, from the same profile the curve command reports.

import type { MeasuredCurve } from '../model/traces';
import type { MeasuredTrace } from './measure';
import { entriesIn, measuredRecommendation, workingSetOf } from './report';

export function measuredCurveOf(measured: MeasuredTrace): MeasuredCurve {
  const entryBytes = measured.geometry.cacheEntryBytes;
  return {
    requests: measured.requests,
    lookups: measured.profile.lookups,
    sampleRate: measured.sampleRate,
    workingSet: workingSetOf(measured),
    span: measured.span,
    hitRatioAt: (cacheBytes) => measured.profile.hitRatio(entriesIn(cacheBytes, entryBytes)),
    smallestCacheFor: (target) => measuredRecommendation(measured, target),
  };
}
