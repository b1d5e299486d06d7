// Assertions on the engine's Outcome values: a test reads the value, or the message of a refusal.
import { strict as assert } from 'node:assert';
import type { Outcome } from '../../src/core/results';

export function valueOf<T>(outcome: Outcome<T>): T {
  if (!outcome.ok) assert.fail(`expected success, got error: ${outcome.error}`);
  return outcome.value;
}

export function errorOf<T>(outcome: Outcome<T>): string {
  if (outcome.ok) assert.fail(`expected an error, got ${String(outcome.value)}`);
  return outcome.error;
}

/** The error must mention each fragment (the value the user wrote, the allowed range, ...). */
export function assertErrorMentions<T>(outcome: Outcome<T>, ...fragments: string[]): void {
  const message = errorOf(outcome);
  for (const fragment of fragments) {
    assert.ok(message.includes(fragment), `error ${JSON.stringify(message)} should mention ${JSON.stringify(fragment)}`);
  }
}
