/** Text formatting for terminal output: numbers with sensible digits, aligned tables. */

export function fmtLength(v: number | null, digits = 3): string {
  return v === null ? '—' : v.toFixed(digits);
}

export function fmtSci(v: number | null, digits = 2): string {
  if (v === null || !Number.isFinite(v)) return '—';
  return v.toExponential(digits).replace('e+', 'e');
}

export function fmtRatio(v: number | null): string {
  return v === null ? '—' : v.toFixed(3);
}

/** Left-aligned first column, right-aligned numbers, two spaces between columns. */
export function table(header: string[], rows: string[][]): string {
  const widths = header.map((h, k) => Math.max(h.length, ...rows.map((r) => r[k].length)));
  const line = (cells: string[]) => cells.map((c, k) => (k === 0 ? c.padEnd(widths[k]) : c.padStart(widths[k]))).join('  ');
  return [line(header), ...rows.map(line)].join('\n');
}
