// Plain aligned columns for the text outputs.
export function renderColumns(rows: readonly (readonly string[])[], gap = '  '): string {
  const widths: number[] = [];
  for (const row of rows) row.forEach((cell, i) => (widths[i] = Math.max(widths[i] ?? 0, cell.length)));
  return rows
    .map((row) => row.map((cell, i) => (i === row.length - 1 ? cell : cell.padEnd(widths[i] ?? 0))).join(gap).trimEnd())
    .join('\n');
}
