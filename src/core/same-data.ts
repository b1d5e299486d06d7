// Whether two pieces of plain data (the engine's report objects: objects, arrays, strings, numbers,
// bigints, booleans) hold the same values. Walks both at once and stops at the first difference,
// without serialising either: the editor's host pass compares a host's results after every lint.

export function sameData(a: unknown, b: unknown): boolean {
  if (a === b) return true;
  if (typeof a !== 'object' || typeof b !== 'object' || a === null || b === null) return false;
  if (Array.isArray(a) || Array.isArray(b)) {
    if (!Array.isArray(a) || !Array.isArray(b) || a.length !== b.length) return false;
    for (let i = 0; i < a.length; i++) if (!sameData(a[i], b[i])) return false;
    return true;
  }
  const keys = Object.keys(a);
  if (keys.length !== Object.keys(b).length) return false;
  for (const key of keys) {
    if (!Object.prototype.hasOwnProperty.call(b, key) || !sameData(Reflect.get(a, key), Reflect.get(b, key))) return false;
  }
  return true;
}

/** The same items in the same order, by identity (the very objects, not equal copies). */
export const sameItems = (a: readonly unknown[], b: readonly unknown[]): boolean => a.length === b.length && a.every((item, i) => item === b[i]);
