// The driver's defaults by generation and host platform ([CACHE], docs/sources.md). The user picks the
// profile in the mapping file (`assume.driver`, `assume.platform`); the tool never guesses it.
import { formatInterval } from './format';
import { KiB, MiB, maxOf, minOf, minimumRefcountCache } from './sizing';

export type DriverGeneration = 'current' | 'legacy';
export type HostPlatform = 'linux' | 'other';
export const DRIVER_GENERATIONS: readonly DriverGeneration[] = ['current', 'legacy'];
export const HOST_PLATFORMS: readonly HostPlatform[] = ['linux', 'other'];

export interface DriverProfile {
  generation: DriverGeneration;
  platform: HostPlatform;
  /** One-line description for explanations. */
  summary: string;
  /** A few words naming the profile ("current driver, Linux host"), for labels. */
  name: string;
  /** The L2 cache the driver picks when none is configured. */
  defaultL2Cache(fullCoverage: bigint, cluster: bigint): bigint;
  /** The refcount cache the driver picks when none is configured. */
  defaultRefcountCache(l2Cache: bigint, cluster: bigint): bigint;
  /** Idle cleanup interval in seconds when none is configured; 0 is off. */
  defaultCleanupInterval: number;
  /** The cache entry size the driver nominally uses (documentation only; sizing uses the slice set, else whole tables). */
  nominalEntrySize: string;
}

const current = (platform: HostPlatform): DriverProfile => {
  const cap = platform === 'linux' ? 32n * MiB : 8n * MiB;
  return {
    generation: 'current',
    platform,
    summary: `current driver on ${platform === 'linux' ? 'Linux' : 'non-Linux'} hosts: L2 cache up to ${cap / MiB} MiB and never above full coverage, refcount cache 4 clusters, cleanup ${platform === 'linux' ? `every ${formatInterval(600)}` : 'off'}`,
    name: `current driver, ${platform === 'linux' ? 'Linux host' : 'other host'}`,
    defaultL2Cache: (fullCoverage) => minOf(fullCoverage, cap),
    defaultRefcountCache: (_l2, cluster) => minimumRefcountCache(cluster),
    defaultCleanupInterval: platform === 'linux' ? 600 : 0,
    nominalEntrySize: '4 KiB, or the cluster size when the cache covers the whole disk',
  };
};

const legacy = (platform: HostPlatform): DriverProfile => ({
  generation: 'legacy',
  platform,
  summary: 'legacy driver: L2 cache 1 MiB (at least 8 clusters), refcount cache a quarter of the L2 cache, cleanup off',
  name: 'legacy driver',
  // "at least 8 clusters" is from memory (docs/sources.md); treated as a default, not a limit.
  defaultL2Cache: (_full, cluster) => maxOf(1n * MiB, 8n * cluster),
  defaultRefcountCache: (l2, cluster) => maxOf(l2 / 4n, minimumRefcountCache(cluster)),
  defaultCleanupInterval: 0,
  nominalEntrySize: 'the whole cluster',
});

export function driverProfile(generation: DriverGeneration = 'current', platform: HostPlatform = 'linux'): DriverProfile {
  return generation === 'legacy' ? legacy(platform) : current(platform);
}

/** The interval the tool recommends when cleanup should run: the current driver's Linux default. */
export const RECOMMENDED_CLEANUP_INTERVAL = 600;
export const HOST_FILESYSTEM_BLOCK = 4n * KiB;
