/**
 * The shared colour scale: log10 of a concentration (cm^-3) mapped linearly onto [0, 1].
 * Net doping is signed; the scale shows its magnitude, and the junction (where it passes
 * through zero) is the dark valley between the two sides.
 */

/** Floor under |value| before the log, cm^-3 (the same floor the junction finder uses). */
export const LOG_FLOOR_CM3 = 1;

export function log10Magnitude(v: number): number {
  return Math.log10(Math.max(Math.abs(v), LOG_FLOOR_CM3));
}

export interface ColourRange {
  /** log10 of the lowest and highest concentration shown, cm^-3 */
  lo: number;
  hi: number;
}

/** Position of a concentration on the scale, clamped to [0, 1]. */
export function scalePosition(valueCm3: number, range: ColourRange): number {
  const span = range.hi - range.lo;
  if (!(span > 0)) return 0;
  return Math.min(1, Math.max(0, (log10Magnitude(valueCm3) - range.lo) / span));
}

/**
 * Default range for a set of layers: up to the largest magnitude rounded up to a decade,
 * down to a decade below the smallest background (substrate) level, but never more than
 * `maxDecades` below the top, so the diffused profile uses most of the map.
 */
export function defaultRange(maxMagnitudeCm3: number, backgroundCm3: number, maxDecades = 8): ColourRange {
  const hi = Math.ceil(log10Magnitude(maxMagnitudeCm3) - 1e-9);
  let lo = Math.floor(log10Magnitude(backgroundCm3) + 1e-9) - 1;
  if (hi - lo > maxDecades) lo = hi - maxDecades;
  if (lo >= hi) lo = hi - 1;
  return { lo, hi };
}

/** Decade ticks of the colour bar: every power of ten in range, thinned to at most `most`. */
export function decadeTicks(range: ColourRange, most = 10): number[] {
  const first = Math.ceil(range.lo - 1e-9);
  const last = Math.floor(range.hi + 1e-9);
  const every = Math.max(1, Math.ceil((last - first + 1) / most));
  const out: number[] = [];
  for (let e = first; e <= last; e += every) out.push(e);
  return out;
}

/** "1e18"-style label of a power of ten, with a superscript exponent for the bar. */
export function decadeLabel(exponent: number): string {
  const sup: Record<string, string> = { '-': '⁻', 0: '⁰', 1: '¹', 2: '²', 3: '³', 4: '⁴', 5: '⁵', 6: '⁶', 7: '⁷', 8: '⁸', 9: '⁹' };
  return `10${String(exponent).split('').map((c) => sup[c] ?? c).join('')}`;
}

/** Concentration with four significant figures, as the readout shows it. */
export function formatConcentration(v: number): string {
  if (v === 0) return '0';
  return v.toExponential(3).replace('e+', 'e');
}
