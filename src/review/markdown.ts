// The review as markdown (`cachewright compare --format markdown`, the editor's "Compare with a
// git revision..."): a summary a CI job posts on a pull request or writes to its job summary. Plain CommonMark with tables and <details>, which the common code-hosting
// services all render; no colours, badges or emoji that only one of them draws.
import { formatSize } from '../core/format';
import type { ComparedFinding, Comparison, DiskChange, DiskRef } from './compare';
import { headline, plural, signedSize } from './summary';

export interface MarkdownOptions {
  /** Prefix for file links (a URL ending in "/"); without it links are relative. */
  linkBase?: string;
  allowWarnings?: number;
}

/** Text safe inside a table cell or a list item: no HTML, no cell breaks, no line breaks. */
const escape = (text: string) => text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/\|/g, '\\|').replace(/\r?\n/g, ' ');
const code = (text: string) => `\`${text.replace(/`/g, "'")}\``;
function link(file: string, line: number, options: MarkdownOptions): string {
  const target = `${options.linkBase ?? ''}${file.split('/').map(encodeURIComponent).join('/')}#L${line}`;
  return `[${escape(file)}:${line}](${target})`;
}

function subject(f: ComparedFinding): string {
  if (f.host !== undefined) return `host ${escape(f.host)}`;
  return [f.machine, f.disk].filter((p) => p !== undefined).map((p) => escape(p as string)).join(' / ');
}

const findingItem = (f: ComparedFinding, options: MarkdownOptions) =>
  `- **${f.severity}** ${code(f.rule)} at ${link(f.file, f.line, options)}${subject(f) ? ` (${subject(f)})` : ''}: ${escape(f.message)}`;

const share = (part: bigint, whole: bigint) => (whole > 0n ? `${(Number((part * 10000n) / whole) / 100).toFixed(2)}%` : '');

function diskItem(d: DiskRef): string {
  return `- ${escape(d.file)}: ${escape(d.machine)} / ${escape(d.disk)}, ${formatSize(d.cacheMemory)} of caches`;
}

function changedItem(d: DiskChange): string {
  const size = d.before.virtualSize !== d.after.virtualSize ? `, ${formatSize(d.before.virtualSize)} to ${formatSize(d.after.virtualSize)}` : '';
  return `- ${escape(d.file)}: ${escape(d.machine)} / ${escape(d.disk)} ${d.how.join(' and ')}${size}; caches ${formatSize(d.before.cacheMemoryTotal)} to ${formatSize(d.after.cacheMemoryTotal)}`;
}

function details(summary: string, lines: string[]): string[] {
  return ['<details>', `<summary>${summary}</summary>`, '', ...lines, '', '</details>', ''];
}

/** What the summary reads: the comparison, and what the base is called (a revision, a folder). */
export interface ReviewSummary {
  comparison: Comparison;
  baseLabel: string;
}

export function renderCompareMarkdown(summary: ReviewSummary, options: MarkdownOptions = {}): string {
  const { comparison, baseLabel } = summary;
  const { findings, memory, disks, added } = comparison;
  const fails = added.errors > 0 || (options.allowWarnings !== undefined && added.warnings > options.allowWarnings);
  const out: string[] = [
    '### cachewright review',
    '',
    `${headline(comparison)} Compared with ${code(baseLabel)}; **${fails ? 'this check fails' : 'this check passes'}**.`,
    '',
  ];

  const machines = memory.machines.filter((m) => m.delta !== 0n);
  if (machines.length > 0) {
    out.push('| Machine | Host | Caches before | Caches after | Change |', '|---|---|--:|--:|--:|');
    for (const m of machines) out.push(`| ${escape(m.name)} | ${m.host !== undefined ? escape(m.host) : ''} | ${formatSize(m.before)} | ${formatSize(m.after)} | ${signedSize(m.delta)} |`);
    out.push('');
  } else out.push('No machine\'s cache memory changes.', '');

  const hosts = memory.hosts.filter((h) => h.delta !== 0n);
  if (hosts.length > 0) {
    out.push('| Host | Memory | Caches before | Caches after | Change | Share after | Budget |', '|---|--:|--:|--:|--:|--:|--:|');
    for (const h of hosts) {
      const budget = h.cacheShare !== undefined ? `${Number((h.cacheShare * 100).toPrecision(12))}%` : '';
      out.push(`| ${escape(h.name)} | ${h.memory !== undefined ? formatSize(h.memory) : 'unknown'} | ${formatSize(h.before)} | ${formatSize(h.after)} | ${signedSize(h.delta)} | ${h.memory !== undefined ? share(h.after, h.memory) : ''} | ${budget} |`);
    }
    out.push('');
  }

  if (findings.new.length > 0) out.push(`#### New findings (${findings.new.length})`, '', ...findings.new.map((f) => findingItem(f, options)), '');

  if (findings.settled.length > 0) out.push(...details(`Settled findings (${findings.settled.length}, positions in the base)`, findings.settled.map((f) => findingItem(f, options))));
  const diskLines = [
    ...(disks.added.length > 0 ? ['Added:', '', ...disks.added.map(diskItem), ''] : []),
    ...(disks.removed.length > 0 ? ['Removed:', '', ...disks.removed.map(diskItem), ''] : []),
    ...(disks.changed.length > 0 ? ['Resized or re-tuned:', '', ...disks.changed.map(changedItem), ''] : []),
  ];
  const diskCount = disks.added.length + disks.removed.length + disks.changed.length;
  if (diskCount > 0) out.push(...details(`Disks added, removed or changed (${diskCount})`, diskLines.slice(0, -1)));
  out.push(`${plural(findings.unchanged, 'finding')} unchanged. Cache settings take effect when a disk is opened; roll changes out through your own change process.`, '');
  return out.join('\n');
}
