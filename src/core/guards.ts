// Type guards for values that arrive from outside (command-line options, settings, messages): the
// check and the narrowing are one expression, so no cast stands where input enters.

/** Whether `value` is one of `allowed` (a list of literals), narrowing it to their type. */
export function isOneOf<T>(allowed: readonly T[], value: unknown): value is T {
  return allowed.some((candidate) => candidate === value);
}
