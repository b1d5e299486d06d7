// A disk's declared access pattern, read with the one notation of the cache model (random, sequential,
// mixed, zipf(S), "P% on Q%"), for the mapping file, the rules and the panel alike.
import { ACCESS_FORMS, parseAccessSpec, type AccessPattern } from './cachemodel/access';
import { fail, ok, type Outcome } from './results';

export const PATTERN_HELP = ACCESS_FORMS;

export function accessOfPattern(pattern: string): Outcome<AccessPattern> {
  const parsed = parseAccessSpec(pattern);
  return parsed.ok ? ok(parsed.value) : fail(parsed.error.message);
}

export const isSequential = (pattern: string): boolean => pattern.trim().toLowerCase() === 'sequential';
