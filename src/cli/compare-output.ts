// `cachewright compare` as text for people and as JSON (docs/cli.md) for tools.
import { stringifyJson } from '../core/json';
import { formatSize } from '../core/format';
import type { ComparedFinding, DiskRef } from '../review/compare';
import { headline, plural, signedSize } from '../review/summary';
import type { CompareOutcome } from './compare';

function findingLine(f: ComparedFinding): string {
  const subject = f.host !== undefined ? `host ${f.host}` : [f.machine, f.disk].filter((p) => p !== undefined).join(' / ');
  return `  ${f.file}:${f.line}:${f.column}  ${f.severity}  ${f.rule}${subject ? `  [${subject}]` : ''}  ${f.message}`;
}

const diskLine = (d: DiskRef) => `  ${d.file}  ${d.machine} / ${d.disk}  (${formatSize(d.cacheMemory)} of caches)`;

export function renderCompareText(outcome: CompareOutcome, _cwd: string): string {
  const { comparison, base, head } = outcome;
  const out: string[] = [`Base ${base.label} against head ${head.label}: ${headline(comparison)}`];
  const { findings, memory, disks } = comparison;
  if (findings.new.length > 0) out.push('', `New in head (${findings.new.length}):`, ...findings.new.map(findingLine));
  if (findings.settled.length > 0) out.push('', `Settled in head (${findings.settled.length}, positions in base):`, ...findings.settled.map(findingLine));
  out.push('', `Unchanged: ${plural(findings.unchanged, 'finding')}.`);
  const machines = memory.machines.filter((m) => m.delta !== 0n);
  if (machines.length > 0) {
    out.push('', 'Cache memory per machine (changed only):');
    for (const m of machines) out.push(`  ${m.name}${m.host !== undefined ? ` on ${m.host}` : ''}: ${formatSize(m.before)} -> ${formatSize(m.after)} (${signedSize(m.delta)})`);
  }
  const hosts = memory.hosts.filter((h) => h.delta !== 0n);
  if (hosts.length > 0) {
    out.push('', 'Cache memory per host (changed only):');
    for (const h of hosts) out.push(`  ${h.name}${h.memory !== undefined ? ` (${formatSize(h.memory)})` : ''}: ${formatSize(h.before)} -> ${formatSize(h.after)} (${signedSize(h.delta)})`);
  }
  if (disks.added.length > 0) out.push('', 'Disks added:', ...disks.added.map(diskLine));
  if (disks.removed.length > 0) out.push('', 'Disks removed:', ...disks.removed.map(diskLine));
  if (disks.changed.length > 0) {
    out.push('', 'Disks changed:');
    for (const d of disks.changed) {
      const size = d.before.virtualSize !== d.after.virtualSize ? `, ${formatSize(d.before.virtualSize)} -> ${formatSize(d.after.virtualSize)}` : '';
      out.push(`  ${d.file}  ${d.machine} / ${d.disk}  ${d.how.join(' and ')}${size}, caches ${formatSize(d.before.cacheMemoryTotal)} -> ${formatSize(d.after.cacheMemoryTotal)}`);
    }
  }
  return `${out.join('\n')}\n`;
}

const findingJson = (f: ComparedFinding) => ({
  rule: f.rule, severity: f.severity, file: f.file, machine: f.machine, disk: f.disk, host: f.host, line: f.line, column: f.column, message: f.message, fingerprint: f.fingerprint,
});

export function renderCompareJson(outcome: CompareOutcome, version: string): string {
  const { comparison, base, head } = outcome;
  const { findings, memory, disks, added } = comparison;
  const document = {
    tool: 'cachewright',
    version,
    base: base.label,
    head: head.label,
    findings: { new: findings.new.map(findingJson), settled: findings.settled.map(findingJson), unchanged: findings.unchanged },
    memory: {
      machines: memory.machines.map((m) => ({ name: m.name, host: m.host, file: m.file, before: m.before, after: m.after, delta: m.delta })),
      hosts: memory.hosts.map((h) => ({ name: h.name, memory: h.memory, cacheShare: h.cacheShare, before: h.before, after: h.after, delta: h.delta })),
      total: memory.total,
    },
    disks,
    summary: { newErrors: added.errors, newWarnings: added.warnings, newInfos: added.infos, settled: findings.settled.length, unchanged: findings.unchanged },
  };
  return `${stringifyJson(document)}\n`;
}
