// JSON with exact byte counts: bigint values are written as integer literals, so a 64 PiB disk
// prints exactly instead of failing (JSON.stringify rejects bigint) or rounding through a float.
// Otherwise it follows JSON.stringify: undefined members are left out, toJSON is not consulted.

export function stringifyJson(value: unknown, indent = 2): string {
  return write(value, '', ' '.repeat(indent)) ?? 'null';
}

function write(value: unknown, current: string, step: string): string | undefined {
  switch (typeof value) {
    case 'bigint':
      return value.toString();
    case 'number':
      return Number.isFinite(value) ? String(value) : 'null';
    case 'string':
    case 'boolean':
      return JSON.stringify(value);
    case 'undefined':
    case 'function':
    case 'symbol':
      return undefined;
  }
  if (value === null || value === undefined) return 'null';
  const inner = current + step;
  const open = step ? `\n${inner}` : '';
  const close = step ? `\n${current}` : '';
  const separator = step ? `,\n${inner}` : ',';
  if (Array.isArray(value)) {
    if (value.length === 0) return '[]';
    const items = value.map((item) => write(item, inner, step) ?? 'null');
    return `[${open}${items.join(separator)}${close}]`;
  }
  const members: string[] = [];
  for (const [key, member] of Object.entries(value)) {
    const text = write(member, inner, step);
    if (text !== undefined) members.push(`${JSON.stringify(key)}:${step ? ' ' : ''}${text}`);
  }
  if (members.length === 0) return '{}';
  return `{${open}${members.join(separator)}${close}}`;
}
