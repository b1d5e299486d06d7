// One sentence on what a change does, and a signed size: shared by the review's text and markdown.
import { formatSize } from '../core/format';
import type { Comparison } from './compare';

/** "1 finding", "2 findings". */
export const plural = (count: number, one: string, many = `${one}s`) => `${count} ${count === 1 ? one : many}`;

/** "+256 MiB", "-1 GiB", "0 B": a change in bytes with its sign. */
export function signedSize(delta: bigint): string {
  if (delta === 0n) return '0 B';
  return `${delta > 0n ? '+' : '-'}${formatSize(delta > 0n ? delta : -delta)}`;
}

/** One sentence on what head adds and settles. */
export function headline(comparison: Comparison): string {
  const { added, findings, memory } = comparison;
  const adds = [added.errors > 0 ? plural(added.errors, 'error') : '', added.warnings > 0 ? plural(added.warnings, 'warning') : '', added.infos > 0 ? `${added.infos} info` : ''].filter(Boolean);
  const parts = [adds.length > 0 ? `adds ${adds.join(', ')}` : 'adds no findings'];
  if (findings.settled.length > 0) parts.push(`settles ${plural(findings.settled.length, 'finding')}`);
  const total = memory.total;
  const memoryText = total.delta === 0n ? `leaves disk cache memory at ${formatSize(total.after)}` : `takes disk cache memory from ${formatSize(total.before)} to ${formatSize(total.after)} (${signedSize(total.delta)})`;
  return `This change ${parts.join(' and ')}, and ${memoryText}.`;
}
