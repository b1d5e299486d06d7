// A finding's identity across runs: what it is about (rule, file, machine, disk, field and the value
// written there), never where it sits. Lines and array indices move when unrelated parts of a file change; names do not. Where a
// machine or disk has no name of its own, its JSON Pointer stands in (the only handle there is).
import { createHash } from 'node:crypto';
import type { Finding } from '../core/results';
import { pointerWithin } from '../model/jsonpath';
import type { ReviewedFile } from './types';

export interface FindingSubject {
  rule: string;
  file: string;
  /** The machine's name, or its JSON Pointer when it has none. */
  machine?: string;
  /** The disk's name, or its JSON Pointer when it has none. */
  disk?: string;
  /** The host a finding about a whole host is about (it then belongs to no one file). */
  host?: string;
  /** Where inside the disk (or machine, or file) the finding points: a JSON Pointer suffix. */
  field: string;
  /** The value written there: changing the offending value makes the finding a new one. */
  value?: string;
}

export interface IdentifiedFinding {
  file: ReviewedFile;
  finding: Finding;
  subject: FindingSubject;
  fingerprint: string;
}

/** Bumped only if the identity's ingredients change: old known-findings files then stop matching. */
const IDENTITY_VERSION = 1;
/** The partialFingerprints key in SARIF output (SARIF 2.1.0 §3.27.17: a versioned name of our own). */
export const FINGERPRINT_KEY = `cachewright-subject/v${IDENTITY_VERSION}`;

function innermost<T extends { pointer: string }>(items: readonly T[], pointer: string): T | undefined {
  let best: T | undefined;
  for (const item of items) if (pointerWithin(pointer, item.pointer) && (!best || item.pointer.length > best.pointer.length)) best = item;
  return best;
}

export function subjectOf(file: ReviewedFile, finding: Finding): FindingSubject {
  const base = { rule: finding.rule, file: file.path };
  if (finding.host !== undefined) return { ...base, host: finding.host, field: '' };
  const disk = innermost(file.disks, finding.pointer);
  const machine = disk ? file.machines.find((m) => m.name === disk.machine && pointerWithin(disk.pointer, m.pointer)) : innermost(file.machines, finding.pointer);
  const scope = disk?.pointer ?? machine?.pointer ?? '';
  return {
    ...base,
    ...(machine ? { machine: machine.named ? machine.name : machine.pointer } : disk ? { machine: disk.machine } : {}),
    ...(disk ? { disk: disk.named ? disk.name : disk.pointer } : {}),
    field: finding.pointer.slice(scope.length),
    ...(finding.written !== undefined ? { value: finding.written } : {}),
  };
}

export function fingerprintOf(subject: FindingSubject): string {
  const parts = subject.host !== undefined
    ? [IDENTITY_VERSION, subject.rule, 'host', subject.host]
    : [IDENTITY_VERSION, subject.rule, subject.file, subject.machine ?? null, subject.disk ?? null, subject.field, subject.value ?? null];
  return createHash('sha256').update(JSON.stringify(parts)).digest('hex').slice(0, 32);
}

/** Every finding of the files that no suppression accepted, with its identity. */
export function identify(files: readonly ReviewedFile[]): IdentifiedFinding[] {
  const out: IdentifiedFinding[] = [];
  for (const file of files) {
    for (const finding of file.findings) {
      if (finding.accepted) continue;
      const subject = subjectOf(file, finding);
      out.push({ file, finding, subject, fingerprint: fingerprintOf(subject) });
    }
  }
  return out;
}

/**
 * Pairs two lists of identities as multisets: two findings with one identity (two disks both
 * named "data" in one machine, say) need two partners.
 */
export function pairUp<A extends { fingerprint: string }, B extends { fingerprint: string }>(before: readonly A[], after: readonly B[]): { kept: B[]; added: B[]; gone: A[] } {
  const waiting = new Map<string, A[]>();
  for (const item of before) waiting.set(item.fingerprint, [...(waiting.get(item.fingerprint) ?? []), item]);
  const kept: B[] = [];
  const added: B[] = [];
  for (const item of after) {
    const partners = waiting.get(item.fingerprint);
    if (partners && partners.length > 0) {
      partners.shift();
      kept.push(item);
    } else added.push(item);
  }
  const gone = [...waiting.values()].flat();
  return { kept, added, gone };
}
