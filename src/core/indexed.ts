// Reads by index that the caller has already bounds-checked. With noUncheckedIndexedAccess every
// `items[i]` is `T | undefined`; writing `items[i]!` or `items[i] as T` would hide a wrong index as
// undefined flowing on (NaN in arithmetic). `atIndex` says the same thing and fails loudly instead.

/** The element at `index`; a read outside the items (or of a hole) is a programming error. */
export function atIndex<T>(items: ArrayLike<T>, index: number): T {
  const value = items[index];
  if (value === undefined) throw new RangeError(`index ${index} is outside 0..${items.length - 1}`);
  return value;
}
