// A rule's wording: every text its findings, related places and fix titles can carry, keyed by a
// short name, with `{slot}`s that a finding fills with values already written by src/rules/format.ts.
// The rule pages (docs/rules/<id>.md, "Messages"), the tests and any later translation read the same
// table; `say` is the one function that turns a key and its fill into text.

/** A rule's texts by key. */
export type Wording = { readonly [key: string]: string };

/** The slot names of a text: 'a {x} b {y}' gives 'x' | 'y'. */
export type SlotsOf<Text extends string> = Text extends `${string}{${infer Slot}}${infer Rest}` ? Slot | SlotsOf<Rest> : never;

/** The values that fill a text's slots, by slot name, each already formatted for people. */
export type Fill<Text extends string> = { readonly [Slot in SlotsOf<Text>]: string };

/** Values for any text, as the engine passes them on without knowing the rule. */
export type AnyFill = { readonly [slot: string]: string };

/** What `say` needs after the key: the fill, or nothing for a text without slots. */
export type FillArgs<Text extends string> = [SlotsOf<Text>] extends [never] ? [] : [fill: Fill<Text>];

/**
 * One text of a wording named by key, with its fill (none for a text without slots). For the
 * general `Wording` (a rule whose table is not known here) any key and fill.
 */
export type Said<W extends Wording> = string extends W[keyof W]
  ? { says: string; fill?: AnyFill }
  : { [K in keyof W & string]: [SlotsOf<W[K]>] extends [never] ? { says: K; fill?: undefined } : { says: K; fill: Fill<W[K]> } }[keyof W & string];

/**
 * The text of `key` with its slots filled. A slot left without a value stays as written (`{name}`),
 * which the wording tests catch; the type of `say` already refuses a missing or misspelt value.
 */
function fillText(text: string, fill: AnyFill | undefined): string {
  let open = text.indexOf('{');
  if (open === -1 || !fill) return text;
  let out = '';
  let from = 0;
  while (open !== -1) {
    const close = text.indexOf('}', open);
    if (close === -1) break;
    const value = fill[text.slice(open + 1, close)];
    out += value === undefined ? text.slice(from, close + 1) : text.slice(from, open) + value;
    from = close + 1;
    open = text.indexOf('{', from);
  }
  return out + text.slice(from);
}

/** The text a wording gives for `key`, its slots filled. */
export function say<W extends Wording, K extends keyof W & string>(wording: W, key: K, ...fill: FillArgs<W[K]>): string;
export function say(wording: Wording, key: string, fill?: AnyFill): string {
  const text = wording[key];
  return text === undefined ? key : fillText(text, fill);
}

/** The text of a finding as a rule names it (key and fill). */
export const sayFinding = (wording: Wording, said: Said<Wording>): string => fillText(wording[said.says] ?? said.says, said.fill);

/** The slot names a text holds, in order of first appearance (for the pages and the tests). */
export function slotsIn(text: string): string[] {
  const names: string[] = [];
  for (const match of text.matchAll(/\{([^{}]*)\}/g)) if (match[1] !== undefined && !names.includes(match[1])) names.push(match[1]);
  return names;
}
