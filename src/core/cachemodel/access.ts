// Access patterns: the workload shapes the model knows, and the one notation every front end uses to
// name them: `random`, `sequential`, `mixed`, `zipf(S)` and `P% on Q%` (docs/sources.md, access patterns).

import { failOn, ok, type ModelResult } from './result';

/** Every touched cache entry is equally likely; the textbook C/N case. */
export interface RandomAccess {
  kind: 'random';
}

/** Entry popularity follows a Zipf law: the entry of rank i is accessed with probability proportional to i^-s. */
export interface ZipfAccess {
  kind: 'zipf';
  exponent: number;
}

/**
 * A share `share` of the accesses falls uniformly on the first `fraction` of the working set (by guest
 * bytes), the rest uniformly on the remainder.
 */
export interface ConcentratedAccess {
  kind: 'concentrated';
  share: number;
  fraction: number;
}

/** Repeated passes over the working set in guest I/O sized steps. */
export interface SequentialAccess {
  kind: 'sequential';
}

export type AccessPattern = RandomAccess | ZipfAccess | ConcentratedAccess | SequentialAccess;

export const MAX_ZIPF_EXPONENT = 4;

/** The accepted forms, named in every message about a pattern that cannot be read. */
export const ACCESS_FORMS = 'random, sequential, mixed, zipf(S) with S from 0 to 4 (e.g. zipf(1.1)), or "P% on Q%" (e.g. "90% on 10%": 90% of I/O on 10% of the disk)';

/** Percent with 12 significant digits, so `0.9` prints `90` and reads back as 0.9. */
const percentText = (share: number): string => String(Number((share * 100).toPrecision(12)));

/** Checks the numbers inside an access pattern (the parser's output always passes). */
export function checkAccessPattern(access: AccessPattern, field = 'access'): ModelResult<AccessPattern> {
  switch (access.kind) {
    case 'random':
    case 'sequential':
      return ok(access);
    case 'zipf':
      if (!Number.isFinite(access.exponent) || access.exponent < 0 || access.exponent > MAX_ZIPF_EXPONENT) {
        return failOn(field, `Zipf exponent ${String(access.exponent)} is out of range: use a number from 0 to ${MAX_ZIPF_EXPONENT} (0 is random; 0.6 to 1.2 is typical of skewed workloads)`);
      }
      return ok(access);
    case 'concentrated':
      if (!Number.isFinite(access.share) || access.share < 0 || access.share > 1) {
        return failOn(field, `the share of I/O ${percentText(access.share)}% is out of range: use 0% to 100%`);
      }
      if (!Number.isFinite(access.fraction) || access.fraction <= 0 || access.fraction >= 1) {
        return failOn(field, `the share of the disk ${percentText(access.fraction)}% is out of range: use more than 0% and less than 100%`);
      }
      return ok(access);
    default: {
      const unknown: { kind?: unknown } = access;
      return failOn(field, `unknown access pattern kind ${JSON.stringify(unknown.kind)}: expected ${ACCESS_FORMS}`);
    }
  }
}

/** A plain decimal number (no sign but `+`, no unit). Returns undefined for anything else. */
function parseNumber(text: string): number | undefined {
  const body = text.trim();
  if (!/^[+]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/.test(body)) return undefined;
  const value = Number(body);
  return Number.isFinite(value) ? value : undefined;
}

const ZIPF_FORM = /^zipf\s*\((.*)\)$/i;
const SHARE_FORM = /^(.*?)%\s*on\s+(.*?)%$/i;

/**
 * Reads an access pattern: `random`, `sequential`, `mixed` (case-insensitive), `zipf(S)` or
 * `P% on Q%`. `mixed` is modelled as random: the cautious reading of a workload nobody measured.
 * Anything else is a problem naming the value and the accepted forms.
 */
export function parseAccessSpec(text: string, field = 'access'): ModelResult<AccessPattern> {
  const spec = text.trim();
  const shown = JSON.stringify(text);
  const word = spec.toLowerCase();
  if (word === 'random' || word === 'mixed') return ok({ kind: 'random' });
  if (word === 'sequential') return ok({ kind: 'sequential' });
  const zipf = ZIPF_FORM.exec(spec);
  if (zipf) {
    const argument = (zipf[1] ?? '').trim();
    const exponent = parseNumber(argument);
    if (exponent === undefined) {
      return failOn(field, `access pattern ${shown}: the Zipf exponent "${argument}" is not a number; use a number from 0 to ${MAX_ZIPF_EXPONENT}, e.g. zipf(1.1)`);
    }
    return prefix(checkAccessPattern({ kind: 'zipf', exponent }, field), shown);
  }
  const share = SHARE_FORM.exec(spec);
  if (share) {
    const [, ioText = '', diskText = ''] = share;
    const io = parseNumber(ioText);
    if (io === undefined) return failOn(field, `access pattern ${shown}: the share of I/O "${ioText.trim()}%" is not a percentage; e.g. "90% on 10%"`);
    const disk = parseNumber(diskText);
    if (disk === undefined) return failOn(field, `access pattern ${shown}: the share of the disk "${diskText.trim()}%" is not a percentage; e.g. "90% on 10%"`);
    return prefix(checkAccessPattern({ kind: 'concentrated', share: io / 100, fraction: disk / 100 }, field), shown);
  }
  return failOn(field, `unknown access pattern ${shown}: use ${ACCESS_FORMS}`);
}

function prefix(result: ModelResult<AccessPattern>, shown: string): ModelResult<AccessPattern> {
  if (result.ok) return result;
  return failOn(result.error.field, `access pattern ${shown}: ${result.error.message}`);
}

/** The notation for a pattern; parseAccessSpec(formatAccessSpec(p)) gives p back. */
export function formatAccessSpec(access: AccessPattern): string {
  switch (access.kind) {
    case 'random':
    case 'sequential':
      return access.kind;
    case 'zipf':
      return `zipf(${String(access.exponent)})`;
    case 'concentrated':
      return `${percentText(access.share)}% on ${percentText(access.fraction)}%`;
  }
}
