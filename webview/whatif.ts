// The what-if mode: the same pure sizing engine the linter uses, run in the webview on a disk's
// layers with the user's trial values, so every number changes at once without a round trip.
import { sizeChain, type LayerSpec } from '../src/core/cache';
import { driverProfile } from '../src/core/profiles';
import type { SizingReport } from '../src/core/results';
import { checkClusterSize, checkExtendedL2, checkSlice } from '../src/core/sizing';
import type { DiskView, PanelView, WhatIfValues } from '../src/protocol/panel';

export interface WhatIfResult {
  sizing: SizingReport;
  entrySize: bigint;
  recommended: { l2Cache: bigint; cleanupInterval: number };
  /** Why a trial value cannot be used; the numbers are then the definition's own. */
  problems: string[];
}

export function whatIf(disk: DiskView, profile: PanelView['profile'], values: WhatIfValues): WhatIfResult {
  const [top, ...backing] = disk.chain;
  const problems: string[] = [];
  if (!top) return { sizing: disk.sizing, entrySize: disk.entrySize, recommended: disk.recommended, problems: ['the disk has no sized layer'] };
  const cluster = values.clusterSize ?? top.geometry.clusterSize;
  const clusterOk = checkClusterSize(cluster);
  if (!clusterOk.ok) problems.push(clusterOk.error);
  const extendedOk = checkExtendedL2(cluster, top.geometry.extendedL2);
  if (!extendedOk.ok) problems.push(extendedOk.error);
  // A slice chosen for the old cluster may not fit the new one; "whole table" follows the cluster.
  const slice = 'cacheEntrySize' in values ? values.cacheEntrySize : top.settings.entrySize;
  if (slice !== undefined) {
    const sliceOk = checkSlice(slice, cluster);
    if (!sliceOk.ok) problems.push(sliceOk.error);
  }
  if (problems.length > 0) return { sizing: disk.sizing, entrySize: disk.entrySize, recommended: disk.recommended, problems };

  const trial: LayerSpec = {
    geometry: { ...top.geometry, clusterSize: cluster },
    settings: {
      ...top.settings,
      ...(values.l2Cache !== undefined ? { l2Cache: values.l2Cache } : {}),
      entrySize: slice,
    },
  };
  if (trial.settings.entrySize === undefined) delete trial.settings.entrySize;
  const sized = sizeChain([trial, ...backing], driverProfile(profile.generation, profile.platform));
  const first = sized.layers[0];
  return {
    sizing: sized.report,
    entrySize: first ? first.entrySize : cluster,
    recommended: sized.recommended,
    problems,
  };
}

/** Cluster sizes the format allows, 512 B to 2 MiB [qcow2 specification: cluster_bits 9..21]. */
export const CLUSTER_CHOICES: readonly bigint[] = Array.from({ length: 13 }, (_, i) => 512n << BigInt(i));

/** Cache entry sizes that fit a cluster: powers of two from 512 B up to the cluster itself. */
export function sliceChoices(cluster: bigint): bigint[] {
  const out: bigint[] = [];
  for (let s = 512n; s <= cluster; s <<= 1n) out.push(s);
  return out;
}
