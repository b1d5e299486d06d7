// `cachewright inspect IMAGE... [--format text|json] [--no-chain]` (CONTRACTS.md §2, §3): reads qcow2
// images read-only, walks their metadata and backing chains. Exit 0 when every image and layer was
// read, 2 when any failed or the command line is wrong; a bad file is a message, never a trace.
import { isAbsolute, relative, resolve } from 'node:path';
import { stringifyJson } from '../core/json';
import { formatSize } from '../core/units';
import { inspectImage, reportFailed, type ImageReport, type InspectProgress } from '../image';
import { formatOption, parseArgs, type OptionSpec } from './args';
import { EXIT_OK, EXIT_USAGE, type CommandIO } from './io';
import { renderColumns } from './table';

const OPTIONS: Record<string, OptionSpec> = {
  format: { value: true },
  'no-chain': { value: false },
  help: { value: false },
};

export const INSPECT_USAGE = `usage: cachewright inspect IMAGE... [--format text|json] [--no-chain]

  Reads qcow2 images (never writes them): header facts, allocated L2 tables and data clusters,
  the L2 cache that holds every allocated table now and the one that maps the whole disk, an
  allocation map, and the backing chain.

  --format    text (default) or json
  --no-chain  read only the images named, not their backing files
`;

type InspectIO = Pick<CommandIO, 'stdout' | 'stderr'> & Partial<Pick<CommandIO, 'cwd' | 'stderrIsTTY'>>;

export async function runInspect(args: string[], io: InspectIO): Promise<number> {
  const parsed = parseArgs(args, OPTIONS);
  if (!parsed.ok) return usage(io, parsed.error);
  if (parsed.value.flags.has('help')) {
    io.stdout(INSPECT_USAGE);
    return EXIT_OK;
  }
  const format = formatOption(parsed.value);
  if (!format.ok) return usage(io, format.error);
  const images = parsed.value.positionals;
  if (images.length === 0) return usage(io, 'name at least one image');
  const followChain = !parsed.value.flags.has('no-chain');

  const reports: ImageReport[] = [];
  for (const image of images) {
    const onProgress = io.stderrIsTTY ? progressLine(io, image) : undefined;
    // Paths are read relative to the caller's folder but shown as the user typed them.
    const where = io.cwd && !isAbsolute(image) ? resolve(io.cwd, image) : image;
    const report = await inspectImage(where, { followChain, onProgress });
    if (onProgress) io.stderr('\r\x1b[K');
    reports.push(where === image || !io.cwd ? report : relabel(report, io.cwd));
  }

  io.stdout(format.value === 'json' ? `${stringifyJson({ images: reports.map(toJson) })}\n` : reports.map(renderText).join('\n'));
  return reports.some(reportFailed) ? EXIT_USAGE : EXIT_OK;
}

function usage(io: InspectIO, message: string): number {
  io.stderr(`cachewright inspect: ${message}\n\n${INSPECT_USAGE}`);
  return EXIT_USAGE;
}

function progressLine(io: InspectIO, image: string): (p: InspectProgress) => void {
  return (p) => {
    const share = p.l1Total === 0 ? 100 : Math.floor((p.l1Done / p.l1Total) * 100);
    io.stderr(`\r\x1b[Kreading ${image}${p.layer > 0 ? ` (backing layer ${p.layer})` : ''}: ${share}%, ${p.l2TablesRead} L2 tables`);
  };
}

/** Shows paths relative to the caller's folder, as a relative IMAGE argument was written. */
function relabel(report: ImageReport, cwd: string): ImageReport {
  const shown = (path: string): string => relative(cwd, path) || '.';
  const fix = (r: ImageReport): ImageReport => ({
    ...r,
    path: shown(r.path),
    error: r.error?.startsWith(r.path) ? shown(r.path) + r.error.slice(r.path.length) : r.error,
    chain: r.chain.map(fix),
  });
  return fix(report);
}

// ---- JSON (CONTRACTS §3: the listed fields first, then ours) ----

const round = (share: number): number => Math.round(share * 10000) / 10000;

export function toJson(report: ImageReport): Record<string, unknown> {
  return {
    path: report.path,
    version: report.version,
    virtualSize: report.virtualSize,
    clusterSize: report.clusterSize,
    extendedL2: report.extendedL2,
    refcountBits: report.refcountBits,
    l1Entries: report.l1Entries,
    l2TablesAllocated: report.l2TablesAllocated,
    dataClustersAllocated: report.dataClustersAllocated,
    l2FullCoverage: report.l2FullCoverage,
    l2AllocatedCoverage: report.l2AllocatedCoverage,
    backing: report.backing,
    dirty: report.dirty,
    chain: report.chain.map(toJson),
    error: report.error,
    errorKind: report.errorKind,
    name: report.name,
    format: report.format,
    backingFormat: report.backingFormat,
    corrupt: report.corrupt,
    encryption: report.encryption,
    compressionType: report.compressionType,
    externalDataFile: report.externalDataFile,
    compressedClusters: report.compressedClusters,
    zeroClusters: report.zeroClusters,
    subclustersAllocated: report.subclustersAllocated,
    subclustersZero: report.subclustersZero,
    allocatedBytes: report.allocatedBytes,
    allocation: report.allocation && {
      regionBytes: report.allocation.regionBytes,
      data: report.allocation.data.map(round),
      zero: report.allocation.zero.map(round),
    },
    warnings: report.warnings,
  };
}

// ---- text ----

/**
 * One cell per region of the virtual disk, by the share this layer stores:
 * '#' over 3/4, '=' over 1/2, '-' over 1/4, ',' any, '0' only zero-flagged, ' ' nothing.
 */
export function allocationBar(data: readonly number[], zero: readonly number[]): string {
  return data
    .map((share, i) => {
      if (share > 0.75) return '#';
      if (share > 0.5) return '=';
      if (share > 0.25) return '-';
      if (share > 0) return ',';
      return (zero[i] ?? 0) > 0 ? '0' : ' ';
    })
    .join('');
}

const plural = (n: number, one: string, many = `${one}s`): string => `${n.toLocaleString('en-US')} ${n === 1 ? one : many}`;

function storedShare(stored: bigint, virtualSize: bigint): string {
  const hundredths = (stored * 10000n) / virtualSize;
  if (hundredths === 0n && stored > 0n) return 'under 0.01%';
  return `${Number(hundredths) / 100}%`;
}

function headline(r: ImageReport): string {
  if (r.format !== 'qcow2') return `${r.format} file${r.virtualSize !== null ? `, ${formatSize(r.virtualSize)}` : ''}`;
  const parts = [`qcow2 v${r.version}`, `${formatSize(r.virtualSize!)} virtual`, `${formatSize(r.clusterSize!)} clusters`];
  if (r.extendedL2) parts.push(`extended L2 (subclusters of ${formatSize(r.clusterSize! / 32n)})`);
  parts.push(`${r.refcountBits}-bit refcounts`);
  return parts.join(', ');
}

function factRows(r: ImageReport): string[][] {
  const rows: string[][] = [];
  if (r.format !== 'qcow2' || r.version === null) return rows;
  if (r.l2TablesAllocated !== null) {
    rows.push(['L2 tables', `${plural(r.l2TablesAllocated, 'table')} allocated, L1 has ${plural(r.l1Entries!, 'entry', 'entries')}`]);
    const data = [`${plural(r.dataClustersAllocated!, 'cluster')} stored here (${formatSize(r.allocatedBytes!)})`];
    if (r.compressedClusters) data.push(`${r.compressedClusters.toLocaleString('en-US')} compressed`);
    if (r.zeroClusters) data.push(`${plural(r.zeroClusters, 'zero cluster')}`);
    if (r.subclustersAllocated !== null) data.push(`${plural(r.subclustersAllocated, 'subcluster')} allocated, ${r.subclustersZero!.toLocaleString('en-US')} zero`);
    rows.push(['data', data.join(', ')]);
    rows.push(['L2 cache', `${formatSize(r.l2AllocatedCoverage!)} holds every allocated table now; ${formatSize(r.l2FullCoverage!)} maps the whole disk`]);
  } else if (r.l2FullCoverage !== null) {
    rows.push(['L2 cache', `${formatSize(r.l2FullCoverage)} maps the whole disk`]);
  }
  if (r.allocation && r.allocation.data.length > 0 && r.virtualSize) {
    rows.push(['map', `|${allocationBar(r.allocation.data, r.allocation.zero)}| ${storedShare(r.allocatedBytes ?? 0n, r.virtualSize)} stored, ${formatSize(r.allocation.regionBytes)} a cell`]);
  }
  const flags = [r.dirty && 'dirty (refcounts may be stale)', r.corrupt && 'marked corrupt', r.encryption !== 'none' && `encrypted (${r.encryption})`, r.externalDataFile !== null && `data in ${r.externalDataFile}`, r.compressionType !== 'zlib' && r.compressionType !== null && `compression ${r.compressionType}`].filter((f): f is string => typeof f === 'string');
  if (flags.length > 0) rows.push(['flags', flags.join(', ')]);
  if (r.backing !== null) rows.push(['backing', `${r.backing}${r.backingFormat ? ` (${r.backingFormat})` : ''}`]);
  for (const w of r.warnings) rows.push(['warning', w]);
  return rows;
}

function renderLayer(r: ImageReport, indent: string, label: string): string {
  const lines: string[] = [`${indent}${label}${r.path}${r.error ? '' : `: ${headline(r)}`}`];
  if (r.error) lines.push(`${indent}  error: ${r.error}`);
  const rows = factRows(r);
  if (rows.length > 0) lines.push(renderColumns(rows).split('\n').map((line) => `${indent}  ${line}`).join('\n'));
  return lines.join('\n');
}

export function renderText(r: ImageReport): string {
  const parts = [renderLayer(r, '', '')];
  r.chain.forEach((layer, i) => parts.push(renderLayer(layer, '  ', `backing ${i + 1}: `)));
  const maps = [r, ...r.chain].some((l) => l.allocation && l.allocation.data.length > 0);
  if (maps) parts.push(`  (map cells: # over 3/4 stored, = over 1/2, - over 1/4, , some, 0 reads as zeros, blank none)`);
  return `${parts.join('\n')}\n`;
}
