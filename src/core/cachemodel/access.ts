// Access patterns: the workload shapes the model knows, and the spec strings the command line and the
// mapping files use to name them (`uniform`, `zipf:S`, `hotspot:P/Q`, `sequential`).

import { fail, ok, type ModelResult } from './result';

/** Every touched cache entry is equally likely; the textbook C/N case. */
export interface UniformAccess {
  kind: 'uniform';
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
export interface HotspotAccess {
  kind: 'hotspot';
  share: number;
  fraction: number;
}

/** Repeated passes over the working set in guest I/O sized steps. */
export interface SequentialAccess {
  kind: 'sequential';
}

export type AccessPattern = UniformAccess | ZipfAccess | HotspotAccess | SequentialAccess;

export const MAX_ZIPF_EXPONENT = 4;

const ALLOWED = 'uniform, zipf:S (S from 0 to 4, e.g. zipf:0.8), hotspot:P/Q (P and Q from 0 to 1 or percentages, e.g. hotspot:0.9/0.1) or sequential';

/** Checks the numbers inside an access pattern (the parser's output always passes). */
export function checkAccessPattern(access: AccessPattern, field = 'access'): ModelResult<AccessPattern> {
  switch (access.kind) {
    case 'uniform':
    case 'sequential':
      return ok(access);
    case 'zipf':
      if (!Number.isFinite(access.exponent) || access.exponent < 0 || access.exponent > MAX_ZIPF_EXPONENT) {
        return fail(field, `Zipf exponent ${String(access.exponent)} is out of range: use a number from 0 to ${MAX_ZIPF_EXPONENT} (0 is uniform; 0.6 to 1.2 is typical of skewed workloads)`);
      }
      return ok(access);
    case 'hotspot':
      if (!Number.isFinite(access.share) || access.share < 0 || access.share > 1) {
        return fail(field, `hot spot share ${String(access.share)} is out of range: the share of accesses must be from 0 to 1 (or 0% to 100%)`);
      }
      if (!Number.isFinite(access.fraction) || access.fraction <= 0 || access.fraction >= 1) {
        return fail(field, `hot spot fraction ${String(access.fraction)} is out of range: the fraction of the working set must be greater than 0 and less than 1 (or 0% to 100%, exclusive)`);
      }
      return ok(access);
    default: {
      const unknown: { kind?: unknown } = access;
      return fail(field, `unknown access pattern kind ${JSON.stringify(unknown.kind)}: expected ${ALLOWED}`);
    }
  }
}

/** A decimal number, or a percentage when it ends in `%`. Returns undefined for anything else. */
function parseShare(text: string): number | undefined {
  const trimmed = text.trim();
  const percent = trimmed.endsWith('%');
  const body = percent ? trimmed.slice(0, -1).trim() : trimmed;
  if (!/^[+]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/.test(body)) return undefined;
  const value = Number(body);
  if (!Number.isFinite(value)) return undefined;
  return percent ? value / 100 : value;
}

/**
 * Parses an access spec string: `uniform`, `zipf:S`, `hotspot:P/Q` or `sequential` (case-insensitive,
 * spaces around the parts allowed). P and Q accept decimals or percentages: `hotspot:90%/10%`.
 */
export function parseAccessSpec(text: string, field = 'access'): ModelResult<AccessPattern> {
  const spec = text.trim();
  const colon = spec.indexOf(':');
  const name = (colon < 0 ? spec : spec.slice(0, colon)).trim().toLowerCase();
  const argument = colon < 0 ? undefined : spec.slice(colon + 1).trim();
  const shown = JSON.stringify(text);
  switch (name) {
    case 'uniform':
    case 'sequential':
      if (argument !== undefined) {
        return fail(field, `access pattern ${shown}: ${name} takes no parameter; write just "${name}"`);
      }
      return ok({ kind: name });
    case 'zipf': {
      if (argument === undefined || argument === '') {
        return fail(field, `access pattern ${shown}: zipf needs an exponent, e.g. zipf:0.8 (a number from 0 to ${MAX_ZIPF_EXPONENT})`);
      }
      const exponent = parseShare(argument);
      if (exponent === undefined || argument.endsWith('%')) {
        return fail(field, `access pattern ${shown}: the Zipf exponent "${argument}" is not a number; use a number from 0 to ${MAX_ZIPF_EXPONENT}, e.g. zipf:0.8`);
      }
      return prefix(checkAccessPattern({ kind: 'zipf', exponent }, field), shown);
    }
    case 'hotspot': {
      const parts = argument === undefined ? [] : argument.split('/');
      if (parts.length !== 2) {
        return fail(field, `access pattern ${shown}: hotspot needs a share and a fraction as P/Q, e.g. hotspot:0.9/0.1 (90% of accesses on 10% of the working set)`);
      }
      const [shareText = '', fractionText = ''] = parts;
      const share = parseShare(shareText);
      if (share === undefined) {
        return fail(field, `access pattern ${shown}: the share "${shareText.trim()}" is not a number; use a number from 0 to 1 or a percentage, e.g. hotspot:0.9/0.1`);
      }
      const fraction = parseShare(fractionText);
      if (fraction === undefined) {
        return fail(field, `access pattern ${shown}: the fraction "${fractionText.trim()}" is not a number; use a number between 0 and 1 or a percentage, e.g. hotspot:0.9/0.1`);
      }
      return prefix(checkAccessPattern({ kind: 'hotspot', share, fraction }, field), shown);
    }
    default:
      return fail(field, `unknown access pattern ${shown}: expected ${ALLOWED}`);
  }
}

function prefix(result: ModelResult<AccessPattern>, shown: string): ModelResult<AccessPattern> {
  if (result.ok) return result;
  return fail(result.problem.field, `access pattern ${shown}: ${result.problem.message}`);
}

/** The spec string for a pattern; parseAccessSpec(formatAccessSpec(p)) gives p back. */
export function formatAccessSpec(access: AccessPattern): string {
  switch (access.kind) {
    case 'uniform':
    case 'sequential':
      return access.kind;
    case 'zipf':
      return `zipf:${String(access.exponent)}`;
    case 'hotspot':
      return `hotspot:${String(access.share)}/${String(access.fraction)}`;
  }
}
