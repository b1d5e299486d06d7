// The labels and wording of an image's groups (layout, allocation, caches, chain), shared by
// `cachewright inspect` and the image viewer so both show one tool. Pure: no DOM, no fs; numbers
// come from cost.ts and are written through the one formatting module (core/format.ts).
import { formatCount, formatCounted, formatShare, formatSize } from '../core/format';
import type { AllocationMapGroup, ChainCost, LayerCost } from '../image/cost';

export type GroupName = 'layout' | 'allocation' | 'caches' | 'chain';

/** Titles as printed (text) and shown (viewer headings). */
export const GROUP_TITLES: Record<GroupName, string> = {
  layout: 'layout',
  allocation: 'allocation',
  caches: 'caches',
  chain: 'chain',
};

export interface CostRow {
  label: string;
  value: string;
  /** The allocation map's row carries the map, drawn as a bar (text) or a picture (viewer). */
  map?: AllocationMapGroup;
}

export interface CostGroup {
  name: Exclude<GroupName, 'chain'>;
  rows: CostRow[];
}

/** Header facts beside the numbers: what a person should know before trusting them. */
export interface HeaderNotes {
  dirty: boolean;
  corrupt: boolean;
  encryption: string;
  compressionType: string;
  externalDataFile: string | null;
  backing: string | null;
  backingFormat: string | null;
}

export interface RowOptions {
  /** Shown where a count is not known yet (the walk is running, or was stopped). */
  pending: string;
  /** The driver profile the default caches assume, in words. */
  profile: string;
}

/** The allocation map in one sentence; the cell size is always printed with it. */
export function mapSummary(map: AllocationMapGroup): string {
  return `${formatCounted(map.data.length, 'cell')} of ${formatSize(map.cellBytes)} each`;
}

function headerNotes(notes: HeaderNotes): string {
  const said = [
    notes.dirty && 'dirty: refcounts may be stale',
    notes.corrupt && 'marked corrupt',
    notes.encryption !== 'none' && `encrypted (${notes.encryption})`,
    notes.externalDataFile !== null && `data in an external file: ${notes.externalDataFile}`,
    notes.compressionType !== 'zlib' && `compression ${notes.compressionType}`,
  ].filter((n): n is string => typeof n === 'string');
  return said.length === 0 ? 'none' : said.join(', ');
}

export function layerGroups(cost: LayerCost, notes: HeaderNotes, options: RowOptions): CostGroup[] {
  const { layout: l, allocation: a, caches: c } = cost;
  const pending = options.pending;
  const entries = l.subclusters > 1
    ? `${l.l2EntryWidth} bytes, ${l.subclusters} subclusters of ${formatSize(l.clusterSize / BigInt(l.subclusters))} per cluster`
    : `${l.l2EntryWidth} bytes, no subclusters`;
  const layout: CostRow[] = [
    { label: 'format', value: `qcow2 version ${l.formatVersion}` },
    { label: 'virtual size', value: formatSize(l.virtualSize) },
    { label: 'cluster size', value: formatSize(l.clusterSize) },
    { label: 'L2 entries', value: entries },
    { label: 'refcount width', value: `${l.refcountWidth} bits` },
    { label: 'backing file', value: notes.backing === null ? 'none' : `${notes.backing}${notes.backingFormat ? ` (${notes.backingFormat})` : ''}` },
    { label: 'header notes', value: headerNotes(notes) },
  ];
  const clusters = a.dataClusters === null ? pending : [
    formatCount(a.dataClusters),
    a.compressedClusters ? `${formatCount(a.compressedClusters)} compressed` : '',
    a.zeroClusters ? `${formatCount(a.zeroClusters)} read as zeros` : '',
  ].filter((p) => p !== '').join(', ');
  const allocation: CostRow[] = [
    { label: 'L1 entries', value: formatCount(a.l1Entries) },
    { label: 'L2 tables present', value: a.l2Tables === null ? pending : formatCount(a.l2Tables) },
    { label: 'data clusters stored here', value: clusters },
  ];
  if (l.subclusters > 1) {
    allocation.push({ label: 'subclusters', value: a.subclustersAllocated === null ? pending : `${formatCount(a.subclustersAllocated)} allocated, ${formatCount(a.subclustersZero ?? 0)} read as zeros` });
  }
  allocation.push({ label: 'share of the disk stored here', value: a.storedShare === null || a.storedBytes === null ? pending : `${formatShare(a.storedShare)} (${formatSize(a.storedBytes)})` });
  if (a.map && a.map.data.length > 0) allocation.push({ label: 'allocation map', value: mapSummary(a.map), map: a.map });
  else allocation.push({ label: 'allocation map', value: pending });
  const caches: CostRow[] = [
    { label: 'L2 cache for the tables present', value: c.l2Allocated === null ? pending : formatSize(c.l2Allocated) },
    { label: 'L2 cache for the whole disk', value: formatSize(c.l2WholeDisk) },
    { label: 'L2 cache by default', value: `${formatSize(c.l2Default)} (${options.profile})` },
    { label: 'refcount cache by default', value: `${formatSize(c.refcountDefault)}, covers ${formatSize(c.choices.default.refcountCovered)} of the image file` },
  ];
  return [{ name: 'layout', rows: layout }, { name: 'allocation', rows: allocation }, { name: 'caches', rows: caches }];
}

/** What a machine pays for the whole chain (L2 + refcount caches of every layer), per choice. */
export function chainRows(chain: ChainCost, options: Pick<RowOptions, 'pending'>): CostRow[] {
  const over = `${formatCounted(chain.layersSized, 'layer')}${chain.layersSized < chain.layers ? ` of ${chain.layers}` : ''}`;
  return [
    { label: 'caches for the tables present', value: chain.allocated === null ? options.pending : formatSize(chain.allocated) },
    { label: 'caches for the whole disk', value: formatSize(chain.wholeDisk) },
    { label: 'caches by default', value: formatSize(chain.default) },
    { label: 'summed over', value: `${over}, L2 + refcount each` },
  ];
}
