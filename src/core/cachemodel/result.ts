// Every entry point of the cache model returns one of these instead of throwing: the model also runs
// in the panel's webview, where a bad what-if value must become a message, never an exception.

/** What was wrong with an input: the field it came from and a sentence naming the value and what is allowed. */
export interface ModelProblem {
  field: string;
  message: string;
}

export type ModelResult<T> = { ok: true; value: T } | { ok: false; problem: ModelProblem };

export function ok<T>(value: T): ModelResult<T> {
  return { ok: true, value };
}

export function fail<T>(field: string, message: string): ModelResult<T> {
  return { ok: false, problem: { field, message } };
}
