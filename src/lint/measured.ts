// A traced disk's part of the report: the measured figures at its effective L2 cache (what JSON and
// SARIF carry, docs/cli.md `measured`) and the curve the sizing panel draws beside the modelled one.
import type { LayerCache } from '../core/cache';
import type { MeasuredCurve } from '../model/traces';
import { measuredTarget } from '../rules/measured';
import type { DiskReport } from './report';

/** The measured figures of a disk with a trace, at its effective L2 cache. */
export function measuredReport(curve: MeasuredCurve, top: LayerCache, target: number): NonNullable<DiskReport['measured']> {
  const recommendation = measuredTarget(curve, target, top.entrySize);
  return {
    hitRatio: curve.hitRatioAt(top.l2),
    workingSet: curve.workingSet,
    recommendedL2Cache: recommendation.cacheBytes,
    sampleRate: curve.sampleRate,
    targetHitRatio: target,
    targetReached: recommendation.reached,
    requests: curve.requests,
    lookups: curve.lookups,
  };
}

/** Points per doubling of the cache: enough for a smooth drawing, few enough for a message. */
const POINTS_PER_OCTAVE = 4;

/**
 * The measured curve as points: whole cache entries at every quarter octave from the smallest size
 * the curve resolves (one entry; 1/R entries when sampled) up to the working set, plus the sizes
 * given (the effective and the recommended cache), each with its exact hit ratio on the trace.
 */
export function measuredCurveReport(curve: MeasuredCurve, entrySize: bigint, at: readonly bigint[]): NonNullable<DiskReport['measuredCurve']> {
  const sizes = new Set<bigint>();
  const first = Math.max(1, Math.ceil(1 / curve.sampleRate - 1e-9));
  const touched = Number(curve.workingSet / entrySize);
  for (let step = 0; ; step++) {
    const entries = Math.round(first * 2 ** (step / POINTS_PER_OCTAVE));
    if (entries >= touched) break;
    sizes.add(BigInt(entries) * entrySize);
  }
  sizes.add(BigInt(Math.max(1, touched)) * entrySize);
  for (const bytes of at) if (bytes > 0n) sizes.add(bytes);
  const points = [...sizes].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0)).map((cacheBytes) => ({ cacheBytes, hitRatio: curve.hitRatioAt(cacheBytes) }));
  return { points, span: curve.span };
}
