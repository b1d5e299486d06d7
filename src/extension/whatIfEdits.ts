// Applies the sizing panel's what-if values through the same edit helpers the rules' fixes use
// (set in place, or insert the key the mapping's selector names), one field at a time on the text,
// then hands the editor one minimal edit: the span between the unchanged start and end.
import type { TextEdit } from '../core/results';
import type { Mapping } from '../lint';
import type { SizeStyle } from '../core/units';
import { setDiskFieldEdit, sizeStyleOfMachines } from '../model/diskEdits';
import { extractMachines, type DiskSpec } from '../model/disks';
import { readDefinition, type DefinitionDocument } from '../model/document';
import { applyEdits } from '../model/edits';
import { diffTexts } from '../model/incremental';
import type { WhatIfValues } from '../protocol/panel';

type Field = 'clusterSize' | 'l2Cache' | 'cacheEntrySize';
const FIELDS: readonly Field[] = ['clusterSize', 'l2Cache', 'cacheEntrySize'];

export type WhatIfOutcome = { ok: true; edit: TextEdit; fields: Field[] } | { ok: false; message: string };

function findDisk(path: string, text: string, mapping: Mapping, pointer: string): { disk?: DiskSpec; error?: string; doc?: DefinitionDocument; style?: SizeStyle } {
  const read = readDefinition(path, text);
  if (!read.document) return { error: 'the definition cannot be parsed; fix its syntax first' };
  const { machines } = extractMachines(read.document, mapping);
  const found = machines.flatMap((m) => m.disks).find((disk) => disk.pointer === pointer);
  return { disk: found, doc: read.document, style: sizeStyleOfMachines(machines), ...(found ? {} : { error: `no disk at ${pointer} any more` }) };
}

/** The one edit that turns `before` into `after`: the span between their common start and end. */
function oneEdit(before: string, after: string): TextEdit {
  const change = diffTexts(before, after) ?? { start: 0, oldEnd: 0, newEnd: 0, delta: 0 };
  return { offset: change.start, length: change.oldEnd - change.start, text: after.slice(change.start, change.newEnd) };
}

export function whatIfEdit(path: string, text: string, mapping: Mapping, pointer: string, values: WhatIfValues): WhatIfOutcome {
  let current = text;
  const fields: Field[] = [];
  for (const field of FIELDS) {
    const bytes = values[field];
    if (bytes === undefined) continue;
    const { disk, doc, style, error } = findDisk(path, current, mapping, pointer);
    if (!disk || !doc) return { ok: false, message: error ?? 'the disk was not found' };
    const result = setDiskFieldEdit(doc, mapping, disk, field, { kind: 'size', bytes }, style);
    if (!result.ok) return { ok: false, message: result.reason };
    const edit = result.edit;
    current = applyEdits(current, [edit]);
    fields.push(field);
  }
  if (fields.length === 0) return { ok: false, message: 'nothing to change' };
  return { ok: true, edit: oneEdit(text, current), fields };
}
