// Setting one field of one disk as text edits: replace the value where it is written, or insert
// the key the mapping's selector names. Rules' fixes and the panel's what-if both go through here.
import { fail, ok, type Outcome, type TextEdit } from '../core/results';
import type { SizeStyle } from '../core/units';
import { extractMachines, type DiskSpec, type DiskValues, type Located, type MachineSpec } from './disks';
import { nodeAt, readDefinition, type DefinitionDocument } from './document';
import { applyEdits, documentSizeStyle, insertFieldEdit, replaceValueEdit, type NewValue } from './edits';
import { diffTexts } from './incremental';
import type { Mapping } from './mapping';
import type { DiskField } from './mapping-schema';

export type FieldEdit = Outcome<TextEdit>;

export function setDiskFieldEdit(document: DefinitionDocument, mapping: Mapping, disk: DiskSpec, field: DiskField & keyof DiskValues, value: NewValue, style: SizeStyle | undefined): FieldEdit {
  const existing: Located<unknown> | undefined = disk.values[field];
  if (existing) {
    if (existing.viaAlias) return fail(`${field} of ${disk.name} comes from a YAML anchor shared with other disks; change it there by hand`);
    const edit = replaceValueEdit(document, existing.node, existing.raw, value, style);
    return edit ? ok(edit) : fail(`cachewright cannot rewrite ${field} of ${disk.name} as it is written`);
  }
  const chain = mapping.diskFields[field]?.memberChain;
  if (!chain || chain.length === 0) return fail(`the mapping file has no plain selector for ${field}, so cachewright cannot write it`);
  // Written but unreadable: invalid-value reports it; inserting would duplicate the key.
  if (nodeAt(document, [...disk.path, ...chain])) return fail(`${field} of ${disk.name} is written but cannot be read; correct it first`);
  const base = nodeAt(document, disk.path);
  if (!base || base.viaAlias) return fail(`${disk.name} comes from a YAML anchor; change it there by hand`);
  const edit = insertFieldEdit(document, base.node, chain, value, style);
  return edit ? ok(edit) : fail(`cachewright cannot write ${field} of ${disk.name} in this file's layout`);
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

/** What the panel's what-if mode may write for a disk; each absent value is left as it is. */
export interface DiskSizeValues {
  clusterSize?: bigint;
  l2Cache?: bigint;
  cacheEntrySize?: bigint;
}

type SizeValueField = keyof DiskSizeValues;
const SIZE_VALUE_FIELDS: readonly SizeValueField[] = ['clusterSize', 'l2Cache', 'cacheEntrySize'];

/**
 * Writes several sizes of the disk at `pointer` through the same helpers the rules' fixes use, one
 * field at a time on the text (each read again, so later fields see earlier ones), and returns one
 * minimal edit: the span between the unchanged start and end of the text.
 */
export function setDiskSizesEdit(path: string, text: string, mapping: Mapping, pointer: string, values: DiskSizeValues): Outcome<{ edit: TextEdit; fields: SizeValueField[] }> {
  let current = text;
  const fields: SizeValueField[] = [];
  for (const field of SIZE_VALUE_FIELDS) {
    const bytes = values[field];
    if (bytes === undefined) continue;
    const read = readDefinition(path, current);
    if (!read.document) return fail('the definition cannot be parsed; fix its syntax first');
    const { machines } = extractMachines(read.document, mapping);
    const disk = machines.flatMap((m) => m.disks).find((d) => d.pointer === pointer);
    if (!disk) return fail(`no disk at ${pointer} any more`);
    const result = setDiskFieldEdit(read.document, mapping, disk, field, { kind: 'size', bytes }, sizeStyleOfMachines(machines));
    if (!result.ok) return result;
    current = applyEdits(current, [result.value]);
    fields.push(field);
  }
  if (fields.length === 0) return fail('nothing to change');
  const change = diffTexts(text, current) ?? { start: 0, oldEnd: 0, newEnd: 0, delta: 0 };
  return ok({ edit: { offset: change.start, length: change.oldEnd - change.start, text: current.slice(change.start, change.newEnd) }, fields });
}
