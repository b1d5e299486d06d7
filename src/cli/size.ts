// `cachewright size`: the sizing numbers of one disk, from flags alone (docs/cli.md, §3).
import { layerCache, sizeChain, type CacheSettings } from '../core/cache';
import { CAUTIONS } from '../core/cautions';
import { stringifyJson } from '../core/json';
import { driverProfile, DRIVER_GENERATIONS, HOST_PLATFORMS, type DriverGeneration, type HostPlatform } from '../core/profiles';
import { fail, ok, type Outcome } from '../core/results';
import {
  checkRefcountBits, DEFAULT_REFCOUNT_BITS,
  entriesPerL2Table, guestBytesPerL2Table, refcountCoveredBytes, writeAmplification,
} from '../core/sizing';
import { formatInterval, formatPercent, formatShare, formatSize } from '../core/format';
import { formatAccessSpec, modelCache, parseAccessSpec, type AccessPattern, type CacheModelReport } from '../core/cachemodel';
import { diskGeometryOptions, formatOption, TEXT_OR_JSON, lastOption, readCommand, sizeOption, type OptionSpec, type ParsedArgs } from './args';
import { renderColumns } from './table';
import { EXIT_OK, EXIT_USAGE, type CommandIO } from './io';
import { isOneOf } from '../core/guards';

const OPTIONS: Record<string, OptionSpec> = {
  size: { value: true },
  'cluster-size': { value: true },
  'extended-l2': { value: false },
  'cache-entry-size': { value: true },
  'refcount-bits': { value: true },
  cache: { value: true },
  'request-size': { value: true },
  access: { value: true },
  'working-set': { value: true },
  driver: { value: true },
  platform: { value: true },
  format: { value: true },
  help: { value: false },
};

export const SIZE_USAGE = `usage: cachewright size --size SIZE [--cluster-size 64K] [--extended-l2] [--cache-entry-size SIZE]
                     [--refcount-bits 16] [--cache SIZE] [--request-size 4K]
                     [--access PATTERN] [--working-set SIZE]
                     [--driver current|legacy] [--platform linux|other] [--format text|json]

  --size              virtual size of the disk (e.g. 20G, 1.5T, 512GiB)
  --cluster-size      cluster size, a power of two from 512 B to 2 MiB (default 64K)
  --extended-l2       16-byte L2 entries with 32 subclusters per cluster
  --cache-entry-size  L2 cache entry size (default: whole L2 tables)
  --refcount-bits     refcount width: 1, 2, 4, 8, 16, 32 or 64 (default 16)
  --cache             configured L2 cache size (default: the driver's)
  --request-size      typical guest write size, for first-write cost (default 4K)
  --access            guest access pattern for the predicted hit ratio (default random):
                      random, sequential, mixed, zipf(S) or "P% on Q%" (e.g. "90% on 10%")
  --working-set       guest bytes the workload touches (default: the whole disk)
  --driver            driver generation whose defaults apply (default current)
  --platform          host platform whose defaults apply (default linux)
`;

interface SizeRequest {
  virtualSize: bigint;
  cluster: bigint;
  extendedL2: boolean;
  cacheEntrySize?: bigint;
  refcountBits: bigint;
  cache?: bigint;
  requestSize: bigint;
  generation: DriverGeneration;
  platform: HostPlatform;
  format: 'text' | 'json';
  access: AccessPattern;
  workingSet?: bigint;
}

function choice<T extends string>(args: ParsedArgs, name: string, allowed: readonly T[], fallback: T): Outcome<T> {
  const raw = lastOption(args, name) ?? fallback;
  return isOneOf(allowed, raw) ? ok(raw) : fail(`--${name} must be ${allowed.join(' or ')}, not "${raw}"`);
}

function readRequest(args: ParsedArgs): Outcome<SizeRequest> {
  if (args.positionals.length > 0) return fail(`unexpected argument "${args.positionals[0]}"`);
  const format = formatOption(args, TEXT_OR_JSON);
  if (!format.ok) return format;
  const geometry = diskGeometryOptions(args);
  if (!geometry.ok) return geometry;
  const { virtualSize, clusterSize, extendedL2, cacheEntrySize } = geometry.value;
  const bitsRaw = lastOption(args, 'refcount-bits');
  let refcountBits = DEFAULT_REFCOUNT_BITS;
  if (bitsRaw !== undefined) {
    if (!/^\d+$/.test(bitsRaw)) return fail(`--refcount-bits: "${bitsRaw}" is not a whole number; allowed: 1, 2, 4, 8, 16, 32, 64`);
    const bits = checkRefcountBits(BigInt(bitsRaw));
    if (!bits.ok) return fail(`--refcount-bits: ${bits.error}`);
    refcountBits = bits.value;
  }
  const cache = sizeOption(args, 'cache', 'L2 cache size');
  if (!cache.ok) return cache;
  const request = sizeOption(args, 'request-size', 'guest write size');
  if (!request.ok) return request;
  if (request.value === 0n) return fail('--request-size (guest write size): must be at least 1 byte');
  const accessText = lastOption(args, 'access') ?? 'random';
  const access = parseAccessSpec(accessText);
  if (!access.ok) return fail(`--access: ${access.error.message}`);
  const workingSet = sizeOption(args, 'working-set', 'working set');
  if (!workingSet.ok) return workingSet;
  if (workingSet.value !== undefined && (workingSet.value === 0n || workingSet.value > virtualSize)) {
    return fail(`--working-set: ${workingSet.value} bytes must be more than 0 and at most the virtual size (${virtualSize} bytes)`);
  }
  const generation = choice(args, 'driver', DRIVER_GENERATIONS, 'current');
  if (!generation.ok) return generation;
  const platform = choice(args, 'platform', HOST_PLATFORMS, 'linux');
  if (!platform.ok) return platform;
  return ok({
    virtualSize, cluster: clusterSize, extendedL2, cacheEntrySize, refcountBits,
    cache: cache.value, requestSize: request.value ?? 4096n, generation: generation.value,
    platform: platform.value, format: format.value, access: access.value, workingSet: workingSet.value,
  });
}

export function runSize(argv: readonly string[], io: CommandIO): number {
  const request = readCommand(argv, OPTIONS, { name: 'size', usage: SIZE_USAGE }, io, readRequest);
  if (!request.ok) return request.error;
  const r = request.value;
  const profile = driverProfile(r.generation, r.platform);
  const settings: CacheSettings = { l2Cache: r.cache, entrySize: r.cacheEntrySize };
  const geometry = { virtualSize: r.virtualSize, clusterSize: r.cluster, extendedL2: r.extendedL2, refcountBits: r.refcountBits };
  const sizing = sizeChain([{ geometry, settings }], profile);
  const layer = layerCache(geometry, settings, profile);
  const predicted = modelCache({
    virtualSize: r.virtualSize, clusterSize: r.cluster, extendedL2: r.extendedL2, entrySize: layer.entrySize,
    cacheBytes: layer.l2, access: r.access, ioSize: r.requestSize,
    ...(r.workingSet !== undefined ? { workingSet: { offset: 0n, length: r.workingSet } } : {}),
  });
  if (!predicted.ok) {
    io.stderr(`cachewright size: ${predicted.error.field}: ${predicted.error.message}\n`);
    return EXIT_USAGE;
  }
  const m = predicted.value;
  if (r.format === 'json') {
    const model = { hitRatio: m.hitRatio, entries: m.entries, cachedEntries: m.cachedEntries, missesPer1000: m.missesPer1000, metadataBytesPerIo: m.metadataBytesPerIo };
    io.stdout(`${stringifyJson({ ...sizing.report, l2Tables: layer.l2Tables, model })}\n`);
    return EXIT_OK;
  }
  io.stdout(renderSizeText(r, sizing.report, layer, profile.summary, m));
  return EXIT_OK;
}

const round = (value: number): string => (value >= 10 ? value.toFixed(0) : value.toFixed(1));

function accessName(r: SizeRequest): string {
  const a = r.access;
  const kind = `${formatAccessSpec(a)} access`;
  return r.workingSet === undefined ? kind : `${kind} over ${formatSize(r.workingSet)}`;
}


function renderSizeText(
  r: SizeRequest,
  report: ReturnType<typeof sizeChain>['report'],
  layer: ReturnType<typeof layerCache>,
  profileSummary: string,
  model: CacheModelReport,
): string {
  const entry = layer.entrySize === r.cluster ? 'whole L2 tables' : `${formatSize(layer.entrySize)} cache entries`;
  const amplification = writeAmplification(r.requestSize, r.cluster, r.extendedL2);
  const source = layer.l2Source === 'configured' ? (layer.l2Capped ? 'configured, capped at full coverage' : 'configured') : 'driver default';
  const rows: string[][] = [
    ['virtual size', formatSize(r.virtualSize), `${r.virtualSize} bytes`],
    ['cluster', formatSize(r.cluster), r.extendedL2 ? `extended L2: 16-byte entries, 32 subclusters of ${formatSize(r.cluster / 32n)}` : 'standard L2: 8-byte entries'],
    ['L2 tables', layer.l2Tables.toString(), `${entriesPerL2Table(r.cluster, r.extendedL2)} entries each, each maps ${formatSize(guestBytesPerL2Table(r.cluster, r.extendedL2))}`],
    ['full-coverage L2', formatSize(report.l2FullCoverage), `maps the whole disk, cached as ${entry}`],
    ['effective L2', formatSize(report.l2Effective), `${source}; covers ${formatSize(report.l2CoveredBytes)} (${formatPercent(report.l2CoveredBytes, r.virtualSize)} of the disk)`],
    ['refcount cache', formatSize(report.refcountEffective), `covers ${formatSize(refcountCoveredBytes(report.refcountEffective, r.cluster, r.refcountBits))} of host clusters at ${r.refcountBits}-bit refcounts`],
    ['cache memory', formatSize(report.cacheMemoryTotal), 'L2 + refcount, this layer'],
    ['idle cleanup', formatInterval(layer.cleanupInterval), 'driver default'],
    ['predicted hits', formatShare(model.hitRatio), `${accessName(r)}: ${model.cachedEntries} of ${model.entries} cache entries held (${model.method})`],
    ['metadata reads', `${round(model.missesPer1000)}/1000`, `extra reads per 1,000 guest I/Os, ${formatSize(BigInt(Math.round(model.metadataBytesPerIo)))} per I/O on average`],
    ['first write', `${amplification.ratio}x`, `a ${formatSize(r.requestSize)} write into unallocated space fills ${formatSize(amplification.bytesMoved)}`],
  ];
  const cautions = [CAUTIONS.reopen, CAUTIONS.hostMemory, CAUTIONS.fixedAtCreation, CAUTIONS.review];
  return [
    `qcow2 sizing (${profileSummary})`,
    '',
    renderColumns(rows),
    '',
    'Before changing a running system:',
    ...cautions.map((c) => `  - ${c}`),
    '',
  ].join('\n');
}
