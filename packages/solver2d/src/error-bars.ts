/**
 * Error bars of the reported lengths: the Richardson estimate from a quantity's values on
 * meshes h, 2h (and 4h), and the keys and types of the bars a report carries. The solves
 * that make those values are error-estimate.ts's.
 *
 * A coarser solve halves the mesh density (mesh.refine × ½) and doubles the time steps
 * (stepGrowth − 1 × 2: the steps grow geometrically, so Δt/t is what sets the time error).
 * The scheme is second order in both, so a quantity f with mesh size h behaves as
 * f(h) ≈ f* + C·h^p with p = 2 once the mesh resolves it, and from the default and the
 * coarser solve
 *   f* ≈ f₁ + (f₁ − f₂)/(2^p − 1),      error of f₁ ≈ |f₁ − f₂|/(2^p − 1).
 * Safety factors follow Roache's grid convergence index (P.J. Roache, Verification and
 * Validation in Computational Science and Engineering, 1998, as summarised in NASA's
 * "Examining Spatial (Grid) Convergence"): 1.25 where the order is measured and agrees with
 * the scheme's, 3 otherwise. With two solves the order is assumed, p = 2, safety 3. Falling
 * back to the spread of the solves where the measured order is above the scheme's follows
 * L. Eça and M. Hoekstra, J. Mar. Sci. Technol. 13 (2008), appendix (p ≥ 2.05: data range).
 *
 * With a third, coarser still solve the order is measured, p = log₂(|f₃ − f₂| / |f₂ − f₁|),
 * and trusted only as far as the scheme allows:
 *  - p within ORDER_BAND of 2: the asymptotic range; p (at most 2) and safety 1.25.
 *  - MIN_ORDER ≤ p below that band: converging, more slowly than the scheme's order; p as
 *    measured (at least MIN_ORDER) and safety 3.
 *  - p above the band, or values that do not converge monotonically: the scheme cannot do
 *    better than second order, so the close agreement of f₁ and f₂ is a coincidence (the
 *    error changing sign between the meshes), not accuracy. The cautious bound: the larger of
 *    the two-mesh bound of f₁ (|f₁ − f₂|: order 2, safety 3) and the two-mesh bound of f₂
 *    (|f₂ − f₃|) halved, f₁'s mesh being twice as fine and at least first order.
 * Checked as a coverage study against exact solutions and finer solves
 * (test/reference/error-coverage.test.ts).
 */
const FORMAL_ORDER = 2;
export const SAFETY_MEASURED = 1.25;
export const SAFETY_ASSUMED = 3;
/** Half-width of the band around the formal order taken as the asymptotic range. */
export const ORDER_BAND = 0.2;
/** The lowest order a bar is scaled with: below it a quantity barely converges. */
export const MIN_ORDER = 0.5;

/** Window fields that get an error bar (lengths, the resistances and the surface concentration as well). */
export const WINDOW_ERROR_KEYS = [
  'junctionDepthUm', 'lateralLeftUm', 'lateralRightUm', 'lateralReachLeftUm', 'lateralReachRightUm',
  'lateralReachDepthLeftUm', 'lateralReachDepthRightUm', 'surfaceConcentrationCm3', 'effectiveWidthUm', 'drawnPlusLateralUm',
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

/** Order measured from three values on meshes h, 2h, 4h; null if they are not monotone or two are equal. */
export function observedOrder(f1: number, f2: number, f3: number): number | null {
  const d12 = f2 - f1;
  const d23 = f3 - f2;
  if (d12 === 0 || d23 === 0 || Math.sign(d12) !== Math.sign(d23)) return null;
  return Math.log2(Math.abs(d23) / Math.abs(d12));
}

/** Error bar of f1 from f2 (and f3 if solved); never 0 where the solves differ. */
export function richardsonError(f1: number, f2: number, f3?: number): number {
  const d12 = Math.abs(f1 - f2);
  const twoMesh = (d: number) => (SAFETY_ASSUMED * d) / (2 ** FORMAL_ORDER - 1);
  if (f3 === undefined) return twoMesh(d12);
  const p = observedOrder(f1, f2, f3);
  if (p === null || p > FORMAL_ORDER + ORDER_BAND) return Math.max(twoMesh(d12), 0.5 * twoMesh(Math.abs(f2 - f3)));
  if (p >= FORMAL_ORDER - ORDER_BAND) return (SAFETY_MEASURED * d12) / (2 ** Math.min(p, FORMAL_ORDER) - 1);
  return (SAFETY_ASSUMED * d12) / (2 ** Math.max(p, MIN_ORDER) - 1);
}

/** The error bar of the first of a quantity's values on meshes h, 2h (and 4h), to 3 digits; null where one is missing. */
export function errorBar(values: (number | null | undefined)[]): number | null {
  const [f1, f2, f3] = values;
  if (typeof f1 !== 'number' || typeof f2 !== 'number') return null;
  return Number(richardsonError(f1, f2, typeof f3 === 'number' ? f3 : undefined).toPrecision(3));
}

