// Applies the sizing panel's what-if values through the same edit helpers the rules' fixes use
// (set in place, or insert the key the mapping's selector names), one field at a time on the text,
// then hands the editor one minimal edit: the span between the unchanged start and end.
import type { TextEdit } from '../core/results';
import type { Mapping } from '../lint';
import { extractMachines, type DiskSpec, type Located } from '../model/disks';
import { nodeAt, readDefinition } from '../model/document';
import { applyEdits, documentSizeStyle, insertFieldEdit, replaceValueEdit } from '../model/edits';
import type { WhatIfValues } from '../../webview/protocol';

type Field = 'clusterSize' | 'l2Cache' | 'l2Slice';
const FIELDS: readonly Field[] = ['clusterSize', 'l2Cache', 'l2Slice'];

export type WhatIfOutcome = { ok: true; edit: TextEdit; fields: Field[] } | { ok: false; message: string };

function findDisk(path: string, text: string, mapping: Mapping, pointer: string): { disk?: DiskSpec; error?: string; doc?: ReturnType<typeof readDefinition>['document']; raws: unknown[] } {
  const read = readDefinition(path, text);
  if (!read.document) return { error: 'the definition cannot be parsed; fix its syntax first', raws: [] };
  const { machines } = extractMachines(read.document, mapping);
  const raws: unknown[] = [];
  let found: DiskSpec | undefined;
  for (const machine of machines) {
    for (const disk of machine.disks) {
      for (const key of ['l2Cache', 'refcountCache', 'totalCache', 'size', 'clusterSize'] as const) {
        const value = disk.values[key];
        if (value) raws.push(value.raw);
      }
      if (disk.pointer === pointer) found = disk;
    }
  }
  return { disk: found, doc: read.document, raws, ...(found ? {} : { error: `no disk at ${pointer} any more` }) };
}

function oneEdit(before: string, after: string): TextEdit {
  let start = 0;
  while (start < before.length && start < after.length && before[start] === after[start]) start++;
  let end = 0;
  while (end < before.length - start && end < after.length - start && before[before.length - 1 - end] === after[after.length - 1 - end]) end++;
  return { offset: start, length: before.length - start - end, text: after.slice(start, after.length - end) };
}

export function whatIfEdit(path: string, text: string, mapping: Mapping, pointer: string, values: WhatIfValues): WhatIfOutcome {
  let current = text;
  const fields: Field[] = [];
  for (const field of FIELDS) {
    const bytes = values[field];
    if (bytes === undefined) continue;
    const { disk, doc, raws, error } = findDisk(path, current, mapping, pointer);
    if (!disk || !doc) return { ok: false, message: error ?? 'the disk was not found' };
    const style = documentSizeStyle(raws);
    const existing = disk.values[field] as Located<unknown> | undefined;
    let edit: TextEdit | undefined;
    if (existing) {
      if (existing.viaAlias) return { ok: false, message: `${field} of ${disk.name} comes from a YAML anchor shared with other disks; change it there by hand` };
      edit = replaceValueEdit(doc, existing.node, existing.raw, { kind: 'size', bytes }, style);
    } else {
      const chain = mapping.diskFields[field]?.memberChain;
      if (!chain || chain.length === 0) return { ok: false, message: `the mapping file has no plain selector for ${field}, so diskwise cannot write it` };
      if (nodeAt(doc, [...disk.path, ...chain])) return { ok: false, message: `${field} of ${disk.name} is written but cannot be read; correct it first` };
      const base = nodeAt(doc, disk.path);
      if (!base || base.viaAlias) return { ok: false, message: `${disk.name} comes from a YAML anchor; change it there by hand` };
      edit = insertFieldEdit(doc, base.node, chain, { kind: 'size', bytes }, style);
    }
    if (!edit) return { ok: false, message: `diskwise cannot write ${field} of ${disk.name} in this file's layout` };
    current = applyEdits(current, [edit]);
    fields.push(field);
  }
  if (fields.length === 0) return { ok: false, message: 'nothing to change' };
  return { ok: true, edit: oneEdit(text, current), fields };
}
