// The traces a disk names, as a request for a measured curve: the trace paths resolved against the
// definition file, and the geometry the disk's top layer has after sizing. The caller measures each
// request (src/trace) and hands the curves back in through LintOptions.traces.
import * as nodePath from 'node:path';
import type { LayerCache } from '../core/cache';
import { sizeChain } from '../core/cache';
import type { DiskSpec, MachineSpec } from '../model/disks';
import type { Mapping } from '../model/mapping';
import type { ImageLookup } from '../model/images';
import type { TraceRequest } from '../model/traces';
import { layerSpecsOf } from './disks';
import type { PreparedDocument } from './documents';

/** The request for a disk that names traces, given its top layer's caches. */
export function traceRequestFor(disk: DiskSpec, top: LayerCache, definitionPath: string): TraceRequest | undefined {
  const written = disk.values.trace;
  if (!written || !disk.isQcow2) return undefined;
  const dir = nodePath.dirname(definitionPath);
  const { virtualSize, clusterSize, extendedL2 } = top.geometry;
  return { paths: written.value.map((p) => nodePath.resolve(dir, p)), geometry: { virtualSize, clusterSize, extendedL2, cacheEntryBytes: top.entrySize } };
}

/** Every request a prepared definition makes (read the image facts first: they can change the geometry). */
export function traceRequestsOf(prepared: PreparedDocument, images?: ImageLookup): TraceRequest[] {
  return traceRequestsOfMachines(prepared.file.path, prepared.mapping, prepared.extraction?.machines ?? [], images);
}

/** The same from extracted machines (the editor's session keeps those). */
export function traceRequestsOfMachines(definitionPath: string, mapping: Mapping, machines: readonly MachineSpec[], images?: ImageLookup): TraceRequest[] {
  const requests: TraceRequest[] = [];
  const dir = nodePath.dirname(definitionPath);
  for (const machine of machines) {
    for (const disk of machine.disks) {
      if (!disk.values.trace || !disk.isQcow2) continue;
      const imagePath = disk.values.image ? nodePath.resolve(dir, disk.values.image.value) : undefined;
      const chain = layerSpecsOf(disk, mapping, imagePath ? images?.(imagePath) : undefined);
      const top = chain ? sizeChain(chain, mapping.profile).layers[0] : undefined;
      const request = top ? traceRequestFor(disk, top, definitionPath) : undefined;
      if (request) requests.push(request);
    }
  }
  return requests;
}
