import { l2CoveredBytes, minimumRefcountCache } from '../core/sizing';
import { measuredTarget, type MeasuredTarget } from './measured';
import { formatShare } from '../core/format';
import type { MeasuredCurve } from '../model/traces';
import { TRACE_CAUTION } from './trace-unreadable';
import type { LayerCache } from '../core/cache';
import type { Fix } from '../core/results';
import { modelCache } from '../core/cachemodel';
import { accessOfPattern } from '../core/workload';
import { ratio, share, size } from './format';
import { docsPage, type Rule } from './types';

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
  return ` Under ${pattern} access it predicts ${ratio(model.value.hitRatio)} L2 hits, ${misses} extra metadata reads per 1,000 guest I/Os; full coverage: 100 % and none.`;
}

function measuredText(curve: MeasuredCurve, effective: bigint, target: number, measured: MeasuredTarget): string {
  const sampled = curve.sampleRate < 1 ? `, estimated from a ${formatShare(curve.sampleRate, 2)} sample` : '';
  const requests = curve.requests.toLocaleString('en-US');
  const goal = measured.reached
    ? `${size(measured.cacheBytes)} reaches the ${formatShare(target)} target`
    : `no cache reaches ${formatShare(target)} on it (first touches always miss); ${size(measured.cacheBytes)} holds all ${size(curve.workingSet)} it touched`;
  return `On the measured trace (${requests} requests${sampled}) it hits ${formatShare(curve.hitRatioAt(effective))} of L2 lookups; ${goal}.`;
}

export const l2CacheUndersized: Rule<'l2-cache-undersized'> = {
  id: 'l2-cache-undersized',
  severity: 'warning',
  description: 'The effective L2 cache maps less than the whole virtual disk, so random I/O pays extra metadata reads.',
  fixable: true,
  docs: docsPage('l2-cache-undersized'),
  checkDisk({ disk, top, sizing, pattern, requestSize, report, fix, trace, mapping }) {
    const { virtualSize, clusterSize, extendedL2 } = top.geometry;
    if (l2CoveredBytes(top.l2, clusterSize, extendedL2, top.entrySize) >= virtualSize) return;
    const need = sizing.recommended.l2Cache;
    const where = top.l2Source === 'default' ? 'the driver default L2 cache' : top.l2Source === 'combined' ? 'the L2 share of the combined cache' : 'the L2 cache';
    const coverage = `${where} of ${size(top.l2)} maps ${size(top.l2Covered)} of this ${size(virtualSize)} disk (${share(top.l2Covered, virtualSize)}); full coverage needs ${size(need)} (${size(need - top.l2)} more memory per open disk).`;
    const { combinedCache, l2Cache, refcountCache } = disk.values;
    const onlyCombined = combinedCache !== undefined && l2Cache === undefined;
    const refcount = refcountCache?.value ?? minimumRefcountCache(clusterSize);
    // With L2 and combined both written, the refcount cache is their difference: raising the L2 cache
    // alone would push it past the combined size, which the driver refuses; the combined size grows too.
    const withCombined = combinedCache !== undefined && l2Cache !== undefined;
    const setL2 = (bytes: bigint, why: string): Fix | undefined => {
      if (onlyCombined) return fix.setSize('combinedCache', bytes + refcount, `Set the combined cache to ${size(bytes + refcount)} (${why})`);
      const l2 = fix.setSize('l2Cache', bytes, `Set the L2 cache to ${size(bytes)} (${why})`);
      if (!withCombined || !l2) return l2;
      const combined = fix.setSize('combinedCache', bytes + top.refcount, '');
      return combined ? { title: `Set the L2 cache to ${size(bytes)} and the combined cache to ${size(bytes + top.refcount)} (${why})`, edits: [...l2.edits, ...combined.edits] } : undefined;
    };
    const at = onlyCombined ? 'combinedCache' : l2Cache ? 'l2Cache' : undefined;
    const curve = trace?.facts.curve;
    if (curve) {
      // The measured curve decides: the disk is settled once its cache reaches the target on the trace.
      const target = mapping.assume.targetHitRatio;
      const measured = measuredTarget(curve, target, top.entrySize);
      if (top.l2 >= measured.cacheBytes) return;
      const message = `${coverage} ${measuredText(curve, top.l2, target, measured)} ${TRACE_CAUTION}`;
      const primary = setL2(measured.cacheBytes, measured.reached ? `reaches ${formatShare(target)} on the measured trace` : 'the working set of the measured trace');
      const full = setL2(need, 'full coverage');
      report({ ...(at ? { at } : {}), message, ...(primary ? { fix: primary } : {}), ...(full ? { alternatives: [full] } : {}) });
      return;
    }
    const message = `${coverage}${prediction(top, pattern, requestSize)}`;
    report({ ...(at ? { at } : {}), message, fix: setL2(need, 'full coverage') });
  },
};
