// Every entry point of the cache model returns the one result shape instead of throwing: the model
// also runs in the panel's webview, where a bad what-if value must become a message, never an exception.
import { fail, type Outcome } from '../results';

export { ok } from '../results';

/** What was wrong with an input: the field it came from and a sentence naming the value and what is allowed. */
export interface ModelProblem {
  field: string;
  message: string;
}

export type ModelResult<T> = Outcome<T, ModelProblem>;

/** A failed result naming the input field it failed on. */
export function failOn(field: string, message: string): { ok: false; error: ModelProblem } {
  return fail({ field, message });
}
