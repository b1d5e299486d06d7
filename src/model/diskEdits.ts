// Setting one field of one disk as text edits: replace the value where it is written, or insert
// the key the mapping's selector names. Rules' fixes and the panel's what-if both go through here.
import type { TextEdit } from '../core/results';
import type { SizeStyle } from '../core/units';
import type { DiskSpec, Located, MachineSpec } from './disks';
import { nodeAt, type DefinitionDocument } from './document';
import { documentSizeStyle, insertFieldEdit, replaceValueEdit, type NewValue } from './edits';
import type { Mapping } from './mapping';
import type { DiskField } from './mappingSchema';

export type FieldEdit = { ok: true; edit: TextEdit } | { ok: false; reason: string };

export function setDiskFieldEdit(document: DefinitionDocument, mapping: Mapping, disk: DiskSpec, field: DiskField, value: NewValue, style: SizeStyle | undefined): FieldEdit {
  const existing = (disk.values as Partial<Record<DiskField, Located<unknown>>>)[field];
  if (existing) {
    if (existing.viaAlias) return { ok: false, reason: `${field} of ${disk.name} comes from a YAML anchor shared with other disks; change it there by hand` };
    const edit = replaceValueEdit(document, existing.node, existing.raw, value, style);
    return edit ? { ok: true, edit } : { ok: false, reason: `cachewright cannot rewrite ${field} of ${disk.name} as it is written` };
  }
  const chain = mapping.diskFields[field]?.memberChain;
  if (!chain || chain.length === 0) return { ok: false, reason: `the mapping file has no plain selector for ${field}, so cachewright cannot write it` };
  // Written but unreadable: invalid-value reports it; inserting would duplicate the key.
  if (nodeAt(document, [...disk.path, ...chain])) return { ok: false, reason: `${field} of ${disk.name} is written but cannot be read; correct it first` };
  const base = nodeAt(document, disk.path);
  if (!base || base.viaAlias) return { ok: false, reason: `${disk.name} comes from a YAML anchor; change it there by hand` };
  const edit = insertFieldEdit(document, base.node, chain, value, style);
  return edit ? { ok: true, edit } : { ok: false, reason: `cachewright cannot write ${field} of ${disk.name} in this file's layout` };
}

/** The unit style a file's sizes use, from every disk's written sizes. */
export function sizeStyleOfMachines(machines: readonly MachineSpec[]): SizeStyle | undefined {
  const raws: unknown[] = [];
  for (const machine of machines) {
    for (const disk of machine.disks) {
      for (const key of ['l2Cache', 'refcountCache', 'combinedCache', 'size', 'clusterSize'] as const) {
        const value = disk.values[key];
        if (value) raws.push(value.raw);
      }
    }
  }
  return documentSizeStyle(raws);
}
