import { l2CoveredBytes, minimumRefcountCache } from '../core/sizing';
import { measuredTarget, type MeasuredTarget } from './measured';
import type { MeasuredCurve } from '../model/traces';
import { TRACE_CAUTION } from './trace-unreadable';
import type { LayerCache } from '../core/cache';
import type { Fix } from '../core/results';
import { modelCache } from '../core/cachemodel';
import { accessOfPattern } from '../core/workload';
import { count, ratio, share, size } from './format';
import { declareRule } from './types';
import { say } from './wording';

const WORDING = {
  modelled: '{where} of {cache} maps {covered} of this {disk} disk ({share}); full coverage needs {need} ({more} more memory per open disk).{prediction}',
  measured: '{where} of {cache} maps {covered} of this {disk} disk ({share}); full coverage needs {need} ({more} more memory per open disk). On the measured trace ({requests} requests{sampled}) it hits {hits} of L2 lookups; {goal}. {caution}',
  defaultCache: 'the driver default L2 cache',
  combinedShare: 'the L2 share of the combined cache',
  l2Cache: 'the L2 cache',
  prediction: ' Under {pattern} access it predicts {hits} L2 hits, {misses} extra metadata reads per 1,000 guest I/Os; full coverage: 100 % and none.',
  sampled: ', estimated from a {rate} sample',
  targetReached: '{cache} reaches the {target} target',
  targetUnreachable: 'no cache reaches {target} on it (first touches always miss); {cache} holds all {workingSet} it touched',
  setCombined: 'Set the combined cache to {combined} ({why})',
  setL2: 'Set the L2 cache to {cache} ({why})',
  setL2AndCombined: 'Set the L2 cache to {cache} and the combined cache to {combined} ({why})',
  fullCoverage: 'full coverage',
  reachesOnTrace: 'reaches {target} on the measured trace',
  traceWorkingSet: 'the working set of the measured trace',
} as const;

/**
 * Sentences already computed, by their inputs: a fleet repeats a few geometries, caches and patterns
 * over thousands of disks, and the model's evaluation costs more than the rest of the rule. The text
 * is a pure function of the key; the map is emptied when it grows past a bound.
 */
const PREDICTIONS = new Map<string, string>();
const PREDICTIONS_BOUND = 4096;

/** What the miss rate costs, from the cache model (docs/sources.md [IRM], [CHE]). */
function prediction(top: LayerCache, pattern: string, requestSize: bigint): string {
  const { virtualSize, clusterSize, extendedL2 } = top.geometry;
  const key = `${pattern}\0${requestSize}\0${virtualSize}\0${clusterSize}\0${extendedL2}\0${top.entrySize}\0${top.l2}`;
  const known = PREDICTIONS.get(key);
  if (known !== undefined) return known;
  const text = predictionText(top, pattern, requestSize);
  if (PREDICTIONS.size >= PREDICTIONS_BOUND) PREDICTIONS.clear();
  PREDICTIONS.set(key, text);
  return text;
}

function predictionText(top: LayerCache, pattern: string, requestSize: bigint): string {
  const access = accessOfPattern(pattern);
  if (!access.ok) return '';
  const { virtualSize, clusterSize, extendedL2 } = top.geometry;
  const model = modelCache({ virtualSize, clusterSize, extendedL2, entrySize: top.entrySize, cacheBytes: top.l2, access: access.value, ioSize: requestSize });
  if (!model.ok) return '';
  // Rounded down, so a ratio just short of 1 never reads as "100 %".
  const misses = Math.round(model.value.missesPer1000);
  return say(WORDING, 'prediction', { pattern, hits: ratio(model.value.hitRatio), misses: count(misses) });
}

/** The slots of the measured text that come from the trace. */
function measuredFill(curve: MeasuredCurve, effective: bigint, target: number, measured: MeasuredTarget): { requests: string; sampled: string; hits: string; goal: string } {
  const goal = measured.reached
    ? say(WORDING, 'targetReached', { cache: size(measured.cacheBytes), target: ratio(target) })
    : say(WORDING, 'targetUnreachable', { target: ratio(target), cache: size(measured.cacheBytes), workingSet: size(curve.workingSet) });
  return {
    requests: count(curve.requests),
    sampled: curve.sampleRate < 1 ? say(WORDING, 'sampled', { rate: ratio(curve.sampleRate, 2) }) : '',
    hits: ratio(curve.hitRatioAt(effective)),
    goal,
  };
}

export const l2CacheUndersized = declareRule({
  id: 'l2-cache-undersized',
  severity: 'warning',
  description: 'The effective L2 cache maps less than the whole virtual disk, so random I/O pays extra metadata reads.',
  fixable: true,
  wording: WORDING,
  checkDisk({ disk, top, sizing, pattern, requestSize, report, fix, trace, mapping }) {
    const { virtualSize, clusterSize, extendedL2 } = top.geometry;
    if (l2CoveredBytes(top.l2, clusterSize, extendedL2, top.entrySize) >= virtualSize) return;
    const need = sizing.recommended.l2Cache;
    const where = say(WORDING, top.l2Source === 'default' ? 'defaultCache' : top.l2Source === 'combined' ? 'combinedShare' : 'l2Cache');
    const cache = size(top.l2);
    const covered = size(top.l2Covered);
    const diskSize = size(virtualSize);
    const coveredShare = share(top.l2Covered, virtualSize);
    const needed = size(need);
    const more = size(need - top.l2);
    const { combinedCache, l2Cache, refcountCache } = disk.values;
    const onlyCombined = combinedCache !== undefined && l2Cache === undefined;
    const refcount = refcountCache?.value ?? minimumRefcountCache(clusterSize);
    // With L2 and combined both written, the refcount cache is their difference: raising the L2 cache
    // alone would push it past the combined size, which the driver refuses; the combined size grows too.
    const withCombined = combinedCache !== undefined && l2Cache !== undefined;
    const setL2 = (bytes: bigint, why: string): Fix | undefined => {
      if (onlyCombined) return fix.setSize('combinedCache', bytes + refcount, say(WORDING, 'setCombined', { combined: size(bytes + refcount), why }));
      const l2 = fix.setSize('l2Cache', bytes, say(WORDING, 'setL2', { cache: size(bytes), why }));
      if (!withCombined || !l2) return l2;
      const combined = fix.setSize('combinedCache', bytes + top.refcount, '');
      return combined ? { title: say(WORDING, 'setL2AndCombined', { cache: size(bytes), combined: size(bytes + top.refcount), why }), edits: [...l2.edits, ...combined.edits] } : undefined;
    };
    const at = onlyCombined ? 'combinedCache' : l2Cache ? 'l2Cache' : undefined;
    const curve = trace?.facts.curve;
    if (curve) {
      // The measured curve decides: the disk is settled once its cache reaches the target on the trace.
      const target = mapping.assume.targetHitRatio;
      const measured = measuredTarget(curve, target, top.entrySize);
      if (top.l2 >= measured.cacheBytes) return;
      const { requests, sampled, hits, goal } = measuredFill(curve, top.l2, target, measured);
      const fill = { where, cache, covered, disk: diskSize, share: coveredShare, need: needed, more, requests, sampled, hits, goal, caution: TRACE_CAUTION };
      const primary = setL2(measured.cacheBytes, measured.reached ? say(WORDING, 'reachesOnTrace', { target: ratio(target) }) : say(WORDING, 'traceWorkingSet'));
      const full = setL2(need, say(WORDING, 'fullCoverage'));
      report({ ...(at ? { at } : {}), says: 'measured', fill, ...(primary ? { fix: primary } : {}), ...(full ? { alternatives: [full] } : {}) });
      return;
    }
    const fill = { where, cache, covered, disk: diskSize, share: coveredShare, need: needed, more, prediction: prediction(top, pattern, requestSize) };
    report({ at, says: 'modelled', fill, fix: setL2(need, say(WORDING, 'fullCoverage')) });
  },
});
