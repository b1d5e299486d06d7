// The linter's per-file report as the sizing panel's view: grouping and re-shaping only, every
// number comes from the report (or, in the what-if mode, from the same engine in the webview).
import * as path from 'node:path';
import { CAUTIONS } from '../core/cautions';
import type { DiskReport, FileReport, Finding, HostReport, Mapping } from '../lint';
import type { ConfiguredCache, DiskView, FindingView, HostView, MachineView, MeasuredView, PanelView } from '../protocol/panel';

function findingView(finding: Finding): FindingView {
  return {
    rule: finding.rule,
    severity: finding.severity,
    message: finding.message,
    pointer: finding.pointer,
    range: finding.range,
    ...(finding.accepted ? { accepted: finding.accepted.reason } : {}),
    ...(finding.fix ? { fixTitle: finding.fix.title } : {}),
  };
}

function configuredOf(disk: DiskReport): ConfiguredCache {
  const { l2Cache, refcountCache, combinedCache, cacheEntrySize, cleanupInterval } = disk.values;
  return {
    ...(l2Cache ? { l2Cache: l2Cache.value } : {}),
    ...(refcountCache ? { refcountCache: refcountCache.value } : {}),
    ...(combinedCache ? { combinedCache: combinedCache.value } : {}),
    ...(cacheEntrySize ? { cacheEntrySize: cacheEntrySize.value } : {}),
    ...(cleanupInterval ? { cleanupInterval: cleanupInterval.value } : {}),
  };
}

function measuredOf(disk: DiskReport, entrySize: bigint): MeasuredView | undefined {
  const { measured, measuredCurve } = disk;
  if (!measured || !measuredCurve) return undefined;
  return {
    traces: disk.values.trace?.value ?? [],
    requests: measured.requests,
    span: measuredCurve.span,
    sampleRate: measured.sampleRate,
    hitRatio: measured.hitRatio,
    workingSet: measured.workingSet,
    recommendedL2Cache: measured.recommendedL2Cache,
    targetHitRatio: measured.targetHitRatio,
    targetReached: measured.targetReached,
    points: measuredCurve.points,
    clusterSize: disk.sizing.clusterSize,
    entrySize,
  };
}

/** The engine's host reports as the panel's rows: paths made relative, machines of this file marked. */
export function hostViews(hosts: readonly HostReport[], report: FileReport, mapping: Mapping, uriOf: (file: string) => string): HostView[] {
  return hosts.map(({ name, budget, load, machines }) => ({
    name,
    ...(budget ? { memory: budget.memory, cacheShare: budget.cacheShare } : {}),
    listed: budget?.listed ?? false,
    ...(load.allowed !== undefined ? { allowed: load.allowed } : {}),
    caches: load.caches,
    guestMemory: load.guestMemory,
    needed: load.needed,
    machines: machines.map((m) => ({
      name: m.name,
      file: path.relative(mapping.dir, m.file).split(path.sep).join('/'),
      uri: uriOf(m.file),
      range: m.range,
      here: m.file === report.path,
      ...(m.memory !== undefined ? { memory: m.memory } : {}),
      cacheMemoryTotal: m.cacheMemoryTotal,
    })),
  }));
}

export function panelView(uri: string, version: number, report: FileReport, mapping: Mapping, hosts: HostView[] = []): PanelView {
  const findingViews = (indices: readonly number[]): FindingView[] => indices.flatMap((i) => {
    const finding = report.findings[i];
    return finding ? [findingView(finding)] : [];
  });
  const diskViews: DiskView[] = report.disks.map((disk) => {
    const entrySize = disk.layers[0]?.entrySize ?? disk.sizing.clusterSize;
    const measured = measuredOf(disk, entrySize);
    return {
      pointer: disk.pointer,
      name: disk.name,
      machine: disk.machine,
      range: disk.range,
      sizing: disk.sizing,
      entrySize,
      extendedL2: disk.extendedL2,
      configured: configuredOf(disk),
      recommended: disk.recommended,
      chain: disk.chain,
      workload: { pattern: disk.pattern, requestSize: disk.requestSize },
      ...(measured ? { measured } : {}),
      findings: findingViews(disk.findings),
    };
  });
  const machines: MachineView[] = report.machines.map((machine) => ({
    pointer: machine.pointer,
    name: machine.name,
    range: machine.range,
    memory: machine.memory,
    budget: machine.budget,
    cacheMemoryTotal: machine.cacheMemoryTotal,
    disks: machine.disks.map((i) => diskViews[i]).filter((d): d is DiskView => d !== undefined),
    findings: findingViews(machine.findings),
  }));
  return {
    uri,
    fileName: path.basename(report.path),
    version,
    profile: { generation: mapping.assume.driver, platform: mapping.assume.platform },
    budgetShare: mapping.cacheShareOfMemory,
    machines,
    fileFindings: findingViews(report.fileFindings),
    hosts,
    cautions: [CAUTIONS.reopen, CAUTIONS.hostMemory, CAUTIONS.review],
  };
}

/** The file's total cache memory over every disk and layer, for the status bar. */
export function fileCacheTotal(report: FileReport): bigint {
  return report.disks.reduce((sum, disk) => sum + disk.sizing.cacheMemoryTotal, 0n);
}
