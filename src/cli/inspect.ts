// `cachewright inspect IMAGE... [--format text|json] [--no-chain]` (docs/cli.md, §3): reads qcow2
// images read-only, walks their metadata and backing chains. Exit 0 when every image and layer was
// read, 2 when any failed or the command line is wrong; a bad file is a message, never a trace.
import { isAbsolute, relative, resolve } from 'node:path';
import { stringifyJson } from '../core/json';
import { fail, ok, type Outcome } from '../core/results';
import { driverProfile, type DriverProfile } from '../core/profiles';
import { inspectImage, reportFailed, type ImageReport, type InspectProgress } from '../image';
import { resolveBackingPath } from '../image/chain';
import { chainCost, layerCost } from '../image/cost';
import { chainRows, GROUP_TITLES, layerGroups, type CostRow, type HeaderNotes } from '../protocol/image-groups';
import { formatOption, readCommand, TEXT_OR_JSON, type ParsedArgs, type OptionSpec } from './args';
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
  const read = readCommand(args, OPTIONS, { name: 'inspect', usage: INSPECT_USAGE }, io, readRequest);
  if (!read.ok) return read.error;
  const { format, images, followChain } = read.value;

  const reports: ImageReport[] = [];
  for (const image of images) {
    const onProgress = io.stderrIsTTY ? progressLine(io, image) : undefined;
    // Paths are read relative to the caller's folder but shown as the user typed them.
    const where = io.cwd && !isAbsolute(image) ? resolve(io.cwd, image) : image;
    const report = await inspectImage(where, { followChain, onProgress });
    if (onProgress) io.stderr('\r\x1b[K');
    reports.push(where === image || !io.cwd ? report : relabel(report, io.cwd));
  }

  io.stdout(format === 'json' ? `${stringifyJson({ images: reports.map((r) => toJson(r)) })}\n` : reports.map((r) => renderImageText(r)).join('\n'));
  return reports.some(reportFailed) ? EXIT_USAGE : EXIT_OK;
}

function readRequest(args: ParsedArgs): Outcome<{ format: 'text' | 'json'; images: string[]; followChain: boolean }> {
  const format = formatOption(args, TEXT_OR_JSON);
  if (!format.ok) return format;
  if (args.positionals.length === 0) return fail('name at least one image');
  return ok({ format: format.value, images: args.positionals, followChain: !args.flags.has('no-chain') });
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

// ---- JSON (docs/cli.md: grouped around what the image costs the caches; byte counts integers) ----

const round = (share: number): number => Math.round(share * 1_000_000) / 1_000_000;

function notesOf(r: ImageReport): HeaderNotes {
  return {
    dirty: r.dirty ?? false, corrupt: r.corrupt ?? false, encryption: r.encryption ?? 'none', compressionType: r.compressionType ?? 'zlib',
    externalDataFile: r.externalDataFile, backing: r.backing, backingFormat: r.backingFormat,
  };
}

function layerJson(report: ImageReport, profile: DriverProfile): Record<string, unknown> {
  const cost = layerCost(report, profile);
  const backing = report.backing === null ? null : { name: report.backing, path: resolveBackingPath(report.path, report.backing), format: report.backingFormat };
  const json: Record<string, unknown> = { path: report.path, format: report.format };
  if (cost) {
    const a = cost.allocation;
    json.layout = cost.layout;
    json.allocation = {
      l1Entries: a.l1Entries, l2Tables: a.l2Tables, dataClusters: a.dataClusters, storedShare: a.storedShare === null ? null : round(a.storedShare),
      storedBytes: a.storedBytes, compressedClusters: a.compressedClusters, zeroClusters: a.zeroClusters,
      ...(cost.layout.subclusters > 1 ? { subclustersAllocated: a.subclustersAllocated, subclustersZero: a.subclustersZero } : {}),
      map: a.map && { cellBytes: a.map.cellBytes, data: a.map.data.map(round), zero: a.map.zero.map(round) },
    };
    const c = cost.caches;
    json.caches = { l2Allocated: c.l2Allocated, l2WholeDisk: c.l2WholeDisk, l2Default: c.l2Default, refcountDefault: c.refcountDefault };
  }
  json.backing = backing;
  json.dirty = report.dirty;
  json.header = cost ? { corrupt: report.corrupt, encryption: report.encryption, compressionType: report.compressionType, externalDataFile: report.externalDataFile } : undefined;
  if (report.warnings.length > 0) json.warnings = report.warnings;
  if (report.error !== undefined) {
    json.error = report.error;
    json.errorKind = report.errorKind;
  }
  return json;
}

export function toJson(report: ImageReport, profile: DriverProfile = driverProfile()): Record<string, unknown> {
  const json = layerJson(report, profile);
  json.chain = report.chain.map((layer) => ({ ...layerJson(layer, profile), chain: [] }));
  const sum = chainCost([report, ...report.chain], profile);
  json.chainCaches = sum && { profile: profile.summary, allocated: sum.allocated, wholeDisk: sum.wholeDisk, default: sum.default, layersSized: sum.layersSized, layers: sum.layers };
  return json;
}

// ---- text: the same groups and labels as the image viewer, human units only ----

/**
 * One character per cell of the allocation map, by the share this layer stores:
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

const MAP_KEY = 'map cells: # over 3/4 stored, = over 1/2, - over 1/4, , some, 0 reads as zeros, blank none';

function groupLines(rows: CostRow[], indent: string): string[] {
  const table = renderColumns(rows.map((r) => [r.label, r.value])).split('\n');
  const out: string[] = [];
  rows.forEach((row, i) => {
    out.push(`${indent}${table[i] ?? ''}`);
    if (row.map) out.push(`${indent}  |${allocationBar(row.map.data, row.map.zero)}|`);
  });
  return out;
}

function layerLines(r: ImageReport, indent: string, profile: DriverProfile): string[] {
  const lines: string[] = [];
  if (r.error) lines.push(`${indent}error: ${r.error}`);
  const cost = layerCost(r, profile);
  if (!cost) {
    if (!r.error) lines.push(`${indent}${r.format} file: no qcow2 metadata, no cache of its own`);
    return lines;
  }
  for (const group of layerGroups(cost, notesOf(r), { pending: 'not counted', profile: profile.summary })) {
    lines.push(`${indent}${GROUP_TITLES[group.name]}`, ...groupLines(group.rows, `${indent}  `));
  }
  for (const w of r.warnings) lines.push(`${indent}warning: ${w}`);
  return lines;
}

export function renderImageText(r: ImageReport, profile: DriverProfile = driverProfile()): string {
  const lines = [r.path, ...layerLines(r, '  ', profile)];
  const layers = [r, ...r.chain];
  if (r.chain.length > 0 || r.backing !== null) {
    lines.push(`  ${GROUP_TITLES.chain}`);
    r.chain.forEach((layer, i) => lines.push(`    backing ${i + 1}: ${layer.path}`, ...layerLines(layer, '      ', profile)));
    const sum = chainCost(layers, profile);
    if (sum) lines.push('    over the chain', ...groupLines(chainRows(sum, { pending: 'not counted' }), '      '));
  }
  if (layers.some((l) => l.allocation && l.allocation.data.length > 0)) lines.push(`  (${MAP_KEY})`);
  return `${lines.join('\n')}\n`;
}
