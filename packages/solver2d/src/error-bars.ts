/**
 * Error bars of the reported lengths: the Richardson estimate from a quantity's values on
 * meshes h, 2h (and 4h), and the keys and types of the bars a report carries. The solves
 * that make those values are error-estimate.ts's.
 *
 * A coarser solve halves the mesh density (mesh.refine × ½) and doubles the time steps
 * (stepGrowth − 1 × 2: the steps grow geometrically, so Δt/t is what sets the time error).
 * The scheme is second order in both, so a quantity f with mesh size h behaves as
 * f(h) ≈ f* + C·h^p with p = 2, and from the default and the coarser solve
 *   f* ≈ f₁ + (f₁ − f₂)/(2^p − 1),      error of f₁ ≈ |f₁ − f₂|/(2^p − 1).
 * With a third, coarser still solve the order is measured, p = log₂(|f₃ − f₂| / |f₂ − f₁|),
 * and the smaller of the measured and the formal order is used (the larger error bar).
 * Safety factors follow common practice for grid-convergence estimates: 1.25 when the
 * order was measured and is credible (0.5 ≤ p, the three values monotone), 3 otherwise.
 */
const FORMAL_ORDER = 2;
export const SAFETY_MEASURED = 1.25;
export const SAFETY_ASSUMED = 3;
const MIN_CREDIBLE_ORDER = 0.5;

/** Window fields that get an error bar (lengths, and the resistances as well). */
export const WINDOW_ERROR_KEYS = [
  'junctionDepthUm', 'lateralLeftUm', 'lateralRightUm', 'lateralReachLeftUm', 'lateralReachRightUm',
  'lateralReachDepthLeftUm', 'lateralReachDepthRightUm', 'effectiveWidthUm', 'drawnPlusLateralUm',
  'curvatureRadiusLeftUm', 'curvatureRadiusRightUm', 'sheetResistanceOhmSq', 'lineResistanceOhmPerUm',
] as const;
export const SPACING_ERROR_KEYS = ['surfaceGapUm', 'minimumGapUm', 'minimumGapDepthUm'] as const;

export type WindowErrorKey = (typeof WINDOW_ERROR_KEYS)[number];
export type SpacingErrorKey = (typeof SPACING_ERROR_KEYS)[number];

export interface ErrorEstimateSummary {
  method: string;
  /** the meshes solved, default first: refine factor, stepGrowth and size */
  meshes: { refine: number; stepGrowth: number; columns: number; rows: number }[];
  /** order measured on the junction depths and lateral encroachments (median), null with two meshes */
  observedOrder: number | null;
}

/** Error bars in the unit of the field they belong to (named the same). */
export type ErrorBars<K extends string> = Partial<Record<K, number | null>>;

/** Order measured from three values on meshes h, 2h, 4h; null if they are not monotone or barely move. */
export function observedOrder(f1: number, f2: number, f3: number): number | null {
  const d12 = f2 - f1;
  const d23 = f3 - f2;
  if (d12 === 0 || d23 === 0 || Math.sign(d12) !== Math.sign(d23)) return null;
  return Math.log2(Math.abs(d23) / Math.abs(d12));
}

/** Error bar of f1 from f2 (and f3 if solved). */
export function richardsonError(f1: number, f2: number, f3?: number): number {
  const measured = f3 === undefined ? null : observedOrder(f1, f2, f3);
  const credible = measured !== null && measured >= MIN_CREDIBLE_ORDER;
  const p = credible ? Math.min(measured, FORMAL_ORDER) : FORMAL_ORDER;
  const safety = credible ? SAFETY_MEASURED : SAFETY_ASSUMED;
  return (safety * Math.abs(f1 - f2)) / (2 ** p - 1);
}

/** The error bar of the first of a quantity's values on meshes h, 2h (and 4h), to 3 digits; null where one is missing. */
export function errorBar(values: (number | null | undefined)[]): number | null {
  const [f1, f2, f3] = values;
  if (typeof f1 !== 'number' || typeof f2 !== 'number') return null;
  return Number(richardsonError(f1, f2, typeof f3 === 'number' ? f3 : undefined).toPrecision(3));
}

