// The webview channel carries JSON, which has no bigint: byte counts travel as tagged strings and
// come back as bigint on the other side, so neither side ever rounds a size through a float.
const BIGINT_TAG = '$bigint';

export function toWire(value: unknown): unknown {
  if (typeof value === 'bigint') return { [BIGINT_TAG]: value.toString() };
  if (Array.isArray(value)) return value.map(toWire);
  if (value !== null && typeof value === 'object') {
    const out: Record<string, unknown> = {};
    for (const [key, member] of Object.entries(value)) if (member !== undefined) out[key] = toWire(member);
    return out;
  }
  return value;
}

export function fromWire(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(fromWire);
  if (value !== null && typeof value === 'object') {
    const tagged = BIGINT_TAG in value ? value[BIGINT_TAG] : undefined;
    if (typeof tagged === 'string' && Object.keys(value).length === 1 && /^-?\d+$/.test(tagged)) return BigInt(tagged);
    const out: Record<string, unknown> = {};
    for (const [key, member] of Object.entries(value)) out[key] = fromWire(member);
    return out;
  }
  return value;
}

/**
 * A decoder for the messages the host sends its own webview, the one trusted direction (both ends are
 * this extension's code, built from one protocol module): the wire value back in shape when its
 * `type` is one of that side's, undefined for anything else (a webview may receive messages meant
 * for others). Messages from a webview to the host are checked in full (webview-input.ts).
 */
export function messageDecoder<M extends { type: string }>(types: readonly M['type'][]): (raw: unknown) => M | undefined {
  const known = new Set<unknown>(types);
  return (raw) => {
    const value = fromWire(raw);
    const type = value !== null && typeof value === 'object' && 'type' in value ? value.type : undefined;
    return known.has(type) ? (value as M) : undefined;
  };
}
