// Each disk on its own: the layers of its backing chain (from the definition, or from the image
// files when the caller read them), their sizing, the disk's rules and its part of the report.
import * as nodePath from 'node:path';
import { sizeChain, type CacheSettings, type DiskSizing, type LayerSpec } from '../core/cache';
import { DEFAULT_REFCOUNT_BITS } from '../core/sizing';
import { nodeAt } from '../model/document';
import type { DiskSpec, Extraction, MachineSpec, ValueProblem } from '../model/disks';
import type { ImageChainFacts } from '../model/images';
import type { Mapping } from '../model/mapping';
import { ruleOf, say, wordingOf } from '../rules';
import { headRange } from './documents';
import type { FileContext } from './prepare';
import type { DiskResult, DiskUnit, MachineUnit, Units } from './report';
import { runDiskRules, runMachineRules, valueProblemFindings, type DiskImage, type DiskTrace } from './rules';
import { traceRequestFor } from './traces';
import { measuredCurveReport, measuredReport } from './measured';

function settingsOf(disk: DiskSpec): CacheSettings {
  const v = disk.values;
  return {
    l2Cache: v.l2Cache?.value,
    refcountCache: v.refcountCache?.value,
    combinedCache: v.combinedCache?.value,
    entrySize: v.cacheEntrySize?.value,
    cleanupInterval: v.cleanupInterval?.value,
  };
}

/**
 * The layers of a disk: its own, then each backing layer. A backing disk described inline brings
 * its own values; one named only by path is taken to have the overlay's geometry (overlays are
 * usually created at their backing file's size) and the driver's default caches.
 */
export function layerSpecsOf(disk: DiskSpec, mapping: Mapping, image?: ImageChainFacts): LayerSpec[] | undefined {
  if (image && image.problem?.layer !== 0 && image.layers[0]?.format === 'qcow2') return layerSpecsFromImage(disk, image);
  const chain: LayerSpec[] = [];
  let current: DiskSpec | undefined = disk;
  let inherited: bigint | undefined;
  while (current) {
    const size = current.values.size?.value ?? inherited;
    if (size === undefined) return chain.length > 0 ? chain : undefined;
    const geometry = {
      virtualSize: size,
      clusterSize: current.values.clusterSize?.value ?? mapping.assume.clusterSize,
      extendedL2: current.values.extendedL2?.value ?? false,
      refcountBits: mapping.assume.refcountBits ?? DEFAULT_REFCOUNT_BITS,
    };
    chain.push({ geometry, settings: settingsOf(current) });
    inherited = size;
    const backing: DiskSpec['backing'] = current.backing;
    if (backing && 'file' in backing) {
      chain.push({ geometry: { ...geometry }, settings: {} });
      break;
    }
    current = backing?.disk;
  }
  return chain;
}

/** The layers as the files are: each qcow2 layer's own geometry; the definition's settings where it gives them. */
function layerSpecsFromImage(disk: DiskSpec, image: ImageChainFacts): LayerSpec[] | undefined {
  const chain: LayerSpec[] = [];
  let described: DiskSpec | undefined = disk;
  for (const [index, layer] of image.layers.entries()) {
    if (image.problem?.layer === index || layer.format !== 'qcow2') break;
    if (layer.virtualSize === undefined || layer.clusterSize === undefined) break;
    chain.push({
      geometry: { virtualSize: layer.virtualSize, clusterSize: layer.clusterSize, extendedL2: layer.extendedL2 ?? false, refcountBits: layer.refcountBits ?? DEFAULT_REFCOUNT_BITS },
      settings: described ? settingsOf(described) : {},
    });
    const backing: DiskSpec['backing'] = described?.backing;
    described = backing && 'disk' in backing ? backing.disk : undefined;
  }
  return chain.length > 0 ? chain : undefined;
}

function sizeDisk(context: FileContext, disk: DiskSpec, machines: readonly MachineSpec[], into: DiskUnit['findings']): DiskUnit['result'] {
  const { mapping, document } = context;
  const written = disk.values.image;
  const definitionDir = nodePath.dirname(document.path);
  const imagePath = written ? nodePath.resolve(definitionDir, written.value) : undefined;
  const facts = imagePath ? context.images?.(imagePath) : undefined;
  const chain = layerSpecsOf(disk, mapping, facts);
  if (!chain) {
    const sizeField = mapping.file.fields.disk.size;
    // A size that is written but unreadable already has its invalid-value finding.
    const sizeChainKeys = mapping.diskFields.size?.memberChain;
    if (sizeChainKeys && nodeAt(document, [...disk.path, ...sizeChainKeys])) return undefined;
    context.add(into, ruleOf('invalid-value'), {
      message: sizeField
        ? say(wordingOf('invalid-value'), 'noSize', { disk: disk.name, selector: sizeField })
        : say(wordingOf('invalid-value'), 'noSizeSelector', { disk: disk.name }),
      pointer: disk.pointer,
      range: headRange(document, disk.range),
    }, { kind: 'disk', disk });
    return undefined;
  }
  const sizing: DiskSizing = sizeChain(chain, mapping.profile);
  const [top] = sizing.layers;
  if (!top) return undefined;
  const image: DiskImage | undefined = written && imagePath && facts ? { path: imagePath, written, facts, definitionDir } : undefined;
  const traceRequest = traceRequestFor(disk, top, document.path);
  const traceFacts = traceRequest ? context.traces?.(traceRequest) : undefined;
  const trace: DiskTrace | undefined = traceFacts && disk.values.trace ? { written: disk.values.trace, paths: traceRequest?.paths ?? [], facts: traceFacts } : undefined;
  runDiskRules(context, disk, sizing, top, image, trace, machines, into);
  const curve = trace?.facts.curve;
  const measured = curve ? measuredReport(curve, top, context.mapping.assume.targetHitRatio) : undefined;
  const result: DiskResult = { sizing, chain };
  if (curve && measured) {
    result.measured = measured;
    result.measuredCurve = measuredCurveReport(curve, top.entrySize, [top.l2, measured.recommendedL2Cache]);
  }
  if (imagePath) {
    result.image = { path: imagePath, read: facts !== undefined && facts.problem?.layer !== 0, layers: (facts?.layers ?? []).map((l) => ({ path: l.path, format: l.format })), ...(facts?.problem ? { problem: facts.problem.message } : {}) };
  }
  return result;
}

/** One disk's findings (its value problems, then its rules) and sizing. */
export function lintDisk(context: FileContext, disk: DiskSpec, problems: readonly ValueProblem[], machines: readonly MachineSpec[]): DiskUnit {
  const unit: DiskUnit = { disk, findings: [] };
  valueProblemFindings(context, problems, unit.findings, { kind: 'disk', disk });
  if (disk.isQcow2) {
    const result = sizeDisk(context, disk, machines, unit.findings);
    if (result) unit.result = result;
  }
  return unit;
}

/** Each value problem belongs to the innermost disk or machine whose pointer holds it. */
function problemsByOwner(extraction: Extraction): { owners: Map<string, ValueProblem[]>; other: ValueProblem[] } {
  const owners = new Map<string, ValueProblem[]>();
  const other: ValueProblem[] = [];
  const scopes = new Set<string>();
  for (const machine of extraction.machines) {
    scopes.add(machine.pointer);
    for (const disk of machine.disks) scopes.add(disk.pointer);
  }
  for (const problem of extraction.problems) {
    let pointer = problem.pointer;
    while (!scopes.has(pointer)) {
      const cut = pointer.lastIndexOf('/');
      if (cut < 0) break;
      pointer = pointer.slice(0, cut);
    }
    if (scopes.has(pointer)) owners.set(pointer, [...(owners.get(pointer) ?? []), problem]);
    else other.push(problem);
  }
  return { owners, other };
}

/** Every disk and machine of a file checked, findings kept by their owner. */
export function lintUnits(context: FileContext, extraction: Extraction): Units {
  const { machines } = extraction;
  const { owners, other } = problemsByOwner(extraction);
  const units: Units = { machines: [], other: [] };
  for (const machine of machines) {
    const unit: MachineUnit = { machine, disks: [], valueFindings: [], ruleFindings: [] };
    // A machine that is its own disk (one disk per machine entry) leaves its problems to the disk.
    const own = machine.disks.some((d) => d.pointer === machine.pointer) ? [] : owners.get(machine.pointer) ?? [];
    valueProblemFindings(context, own, unit.valueFindings, { kind: 'machine', machine });
    for (const disk of machine.disks) unit.disks.push(lintDisk(context, disk, owners.get(disk.pointer) ?? [], machines));
    runMachineRules(context, unit);
    units.machines.push(unit);
  }
  valueProblemFindings(context, other, units.other);
  return units;
}
