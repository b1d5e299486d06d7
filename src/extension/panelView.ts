// The linter's per-file report as the sizing panel's view: grouping and re-shaping only, every
// number comes from the report (or, in the what-if mode, from the same engine in the webview).
import * as path from 'node:path';
import type { LayerCache, LayerSpec } from '../core/cache';
import { CAUTIONS } from '../core/cautions';
import { parseInterval, parseSize } from '../core/units';
import type { DiskReport, FileReport, Finding, Mapping } from '../lint';
import type { ConfiguredCache, DiskView, FindingView, MachineView, PanelView } from '../protocol/panel';

const within = (pointer: string, scope: string): boolean => scope === '' || pointer === scope || pointer.startsWith(`${scope}/`);

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
  const out: ConfiguredCache = {};
  for (const key of ['l2Cache', 'refcountCache', 'combinedCache', 'cacheEntrySize'] as const) {
    const raw = disk.configured[key]?.raw;
    if (raw === undefined) continue;
    const parsed = parseSize(raw);
    if (parsed.ok) out[key] = parsed.value;
  }
  const interval = disk.configured.cleanupInterval?.raw;
  if (interval !== undefined) {
    const parsed = parseInterval(interval);
    if (parsed.ok) out.cleanupInterval = parsed.value;
  }
  return out;
}

/**
 * The layers as specs the engine can size again. The top layer carries what the definition sets;
 * a backing layer carries the caches it was sized with, which reproduce the same numbers.
 */
function chainOf(disk: DiskReport, configured: ConfiguredCache): LayerSpec[] {
  return disk.layers.map((layer: LayerCache, index): LayerSpec => {
    if (index === 0) {
      return {
        geometry: layer.geometry,
        settings: {
          ...(configured.l2Cache !== undefined ? { l2Cache: configured.l2Cache } : {}),
          ...(configured.refcountCache !== undefined ? { refcountCache: configured.refcountCache } : {}),
          ...(configured.combinedCache !== undefined ? { combinedCache: configured.combinedCache } : {}),
          ...(configured.cacheEntrySize !== undefined ? { entrySize: configured.cacheEntrySize } : {}),
          ...(configured.cleanupInterval !== undefined ? { cleanupInterval: configured.cleanupInterval } : {}),
        },
      };
    }
    return {
      geometry: layer.geometry,
      settings: {
        ...(layer.l2Source !== 'default' ? { l2Cache: layer.l2 } : {}),
        ...(layer.refcountSource !== 'default' ? { refcountCache: layer.refcount } : {}),
        ...(layer.entrySize !== layer.geometry.clusterSize ? { entrySize: layer.entrySize } : {}),
        ...(layer.cleanupSource === 'configured' ? { cleanupInterval: layer.cleanupInterval } : {}),
      },
    };
  });
}

export function panelView(uri: string, version: number, report: FileReport, mapping: Mapping): PanelView {
  const claimed = new Set<Finding>();
  const diskViews: DiskView[] = report.disks.map((disk) => {
    const findings = report.findings.filter((f) => within(f.pointer, disk.pointer));
    for (const f of findings) claimed.add(f);
    const configured = configuredOf(disk);
    return {
      pointer: disk.pointer,
      name: disk.name,
      machine: disk.machine,
      range: disk.range,
      sizing: disk.sizing,
      entrySize: disk.layers[0]?.entrySize ?? disk.sizing.clusterSize,
      extendedL2: disk.extendedL2,
      configured,
      recommended: disk.recommended,
      chain: chainOf(disk, configured),
      workload: { pattern: disk.pattern, requestSize: disk.requestSize },
      findings: findings.map(findingView),
    };
  });
  const machines: MachineView[] = report.machines.map((machine) => {
    const findings = report.findings.filter((f) => !claimed.has(f) && within(f.pointer, machine.pointer));
    for (const f of findings) claimed.add(f);
    return {
      pointer: machine.pointer,
      name: machine.name,
      range: machine.range,
      memory: machine.memory,
      budget: machine.budget,
      cacheMemoryTotal: machine.cacheMemoryTotal,
      disks: machine.disks.map((i) => diskViews[i]).filter((d): d is DiskView => d !== undefined),
      findings: findings.map(findingView),
    };
  });
  return {
    uri,
    fileName: path.basename(report.path),
    version,
    profile: { generation: mapping.assume.driver, platform: mapping.assume.platform },
    budgetShare: mapping.cacheShareOfMemory,
    machines,
    fileFindings: report.findings.filter((f) => !claimed.has(f)).map(findingView),
    cautions: [CAUTIONS.reopen, CAUTIONS.hostMemory, CAUTIONS.review],
  };
}

/** The file's total cache memory over every disk and layer, for the status bar. */
export function fileCacheTotal(report: FileReport): bigint {
  return report.disks.reduce((sum, disk) => sum + disk.sizing.cacheMemoryTotal, 0n);
}
