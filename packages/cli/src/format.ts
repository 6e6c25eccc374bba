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

/**
 * A value with its error bar, "1.0648 ± 0.0004": the error to one significant digit and the
 * value to the same decimal place (at least `digits` decimals). Without an error bar, the value alone.
 */
export function fmtPlusMinus(v: number | null, error: number | null | undefined, digits = 3): string {
  if (v === null) return '—';
  if (error === null || error === undefined || !Number.isFinite(error)) return v.toFixed(digits);
  if (error === 0) return `${v.toFixed(digits)} ± 0`;
  const place = Math.min(8, Math.max(digits, -Math.floor(Math.log10(error))));
  return `${v.toFixed(place)} ± ${error.toFixed(place)}`;
}

/**
 * Control characters (C0, DEL, C1) and the bidirectional overrides, which a terminal would obey
 * rather than show: an escape sequence in a recipe's title could clear the screen or set the
 * window title. Each is shown as its JSON-style escape instead (\u001b), as error messages
 * quote a recipe's text with JSON.stringify.
 */
const UNSHOWABLE = /[\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/g;

/** Text from a recipe (or any input), safe to print on a terminal: controls shown escaped, not obeyed. */
export function terminalText(text: string): string {
  return text.replace(UNSHOWABLE, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
}
