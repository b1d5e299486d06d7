// Parsing user input never throws across a module boundary: it returns one of these.
export type Outcome<T> = { ok: true; value: T } | { ok: false; error: string };

export const ok = <T>(value: T): Outcome<T> => ({ ok: true, value });
export const fail = <T = never>(error: string): Outcome<T> => ({ ok: false, error });
