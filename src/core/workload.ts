// A disk's declared access pattern: the everyday words (random, sequential, mixed) or a model spec
// (uniform, zipf:S, hotspot:P/Q, sequential), mapped onto the cache model's patterns.
import { parseAccessSpec, type AccessPattern } from './cachemodel';
import { fail, ok, type Outcome } from './result';

export const PATTERN_HELP = 'random, sequential, mixed, uniform, zipf:S (e.g. zipf:0.8) or hotspot:P/Q (e.g. hotspot:0.9/0.1)';

/** "random" and "mixed" are modelled as uniform access over the disk: the cautious reading. */
export function accessOfPattern(pattern: string): Outcome<AccessPattern> {
  const word = pattern.trim().toLowerCase();
  if (word === 'random' || word === 'mixed') return ok({ kind: 'uniform' });
  const parsed = parseAccessSpec(word);
  return parsed.ok ? ok(parsed.value) : fail(`the access pattern must be ${PATTERN_HELP}; ${parsed.problem.message}`);
}

export const isSequential = (pattern: string): boolean => pattern.trim().toLowerCase() === 'sequential';
