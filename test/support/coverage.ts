/**
 * The error-bar coverage study: each case solved at the default mesh and on meshes 2h and 4h
 * (the report's own error bars, withErrorBars), its numbers compared with the exact answer
 * or, where there is none, a solve 4× finer. A bar brackets when it is at least the true
 * error; it is tight when at most 10× the true error, with true errors below 1e-5 µm (a
 * hundredth of a nanometre, below the report's six digits for any junction here) counted as
 * 1e-5 µm.
 */
import { analyze, coarseReports, coarsenedRecipe, parseRecipe, planRecipe, searchStripeWithError, simulate, withErrorBars, pairRecipe } from '../../packages/solver2d/src/index.ts';
import type { Recipe } from '../../packages/solver2d/src/recipe.ts';
import { bisect } from './closed-forms.ts';
import { COVERAGE_NB, coverageCases, type CoverageCase, type CoverageQuantity } from './coverage-cases.ts';

export const TRUE_ERROR_FLOOR_UM = 1e-5;

export interface CoverageRow {
  name: string;
  quantity: string;
  value: number;
  bar: number;
  truth: number;
  /** where the truth comes from: exact, or a solve 4× finer */
  reference: 'exact' | 'finer solve';
  trueError: number;
  brackets: boolean;
  tight: boolean;
}

export const depthOf = (recipe: Record<string, unknown>) => planRecipe(parseRecipe(recipe)).mesh.depthUm;

function row(name: string, quantity: string, value: number, bar: number, truth: number, reference: CoverageRow['reference']): CoverageRow {
  const trueError = Math.abs(value - truth);
  return { name, quantity, value, bar, truth, reference, trueError, brackets: bar >= trueError, tight: bar <= 10 * Math.max(trueError, TRUE_ERROR_FLOOR_UM) };
}

/**
 * The window quantities a case checks: the junction depth, the surface lateral, and the
 * reach with its depth where the junction bulges below the surface (elsewhere they are the
 * lateral and 0 by construction, and would count the same number twice).
 */
function quantitiesOf(c: CoverageCase): CoverageQuantity[] {
  const bulges = (c.exact.lateralReachDepthLeftUm ?? 0) > 0;
  const out: CoverageQuantity[] = ['junctionDepthUm'];
  if (c.exact.lateralLeftUm !== null) out.push('lateralLeftUm');
  if (bulges) out.push('lateralReachLeftUm', 'lateralReachDepthLeftUm');
  return out;
}

/** Runs the window study; `finer(c)` says whether a case whose lateral has no closed form is solved 4× finer (else skipped). */
export function windowCoverage(finer: (c: CoverageCase) => boolean): { rows: CoverageRow[]; cases: number } {
  const rows: CoverageRow[] = [];
  let cases = 0;
  for (const c of coverageCases(depthOf)) {
    const recipe = parseRecipe(c.recipe);
    const fine = analyze(simulate(planRecipe(recipe))).report;
    const report = withErrorBars([fine, ...coarseReports(recipe, { levels: 2 })], recipe);
    const w = report.windows[0];
    const reference = c.fromFinerSolve && finer(c) ? analyze(simulate(planRecipe(coarsenedRecipe(recipe, -2)))).report.windows[0] : null;
    cases++;
    for (const q of quantitiesOf(c)) {
      const exact = c.exact[q];
      const truth = exact ?? (c.fromFinerSolve?.includes(q) ? reference?.[q] : undefined);
      const value = w[q];
      const bar = w.errors?.[q];
      if (typeof truth !== 'number' || typeof value !== 'number' || typeof bar !== 'number') continue;
      rows.push(row(c.name, q, value, bar, truth, exact === undefined ? 'finer solve' : 'exact'));
    }
  }
  return { rows, cases };
}

/** The cases of the full spacing study: films of several widths and budgets, implants at several depths, ramps. */
export const SPACING_CASES = /^film (0\.5|2|8) µm window, 1100|^film (0\.5|2) µm window, 1000|^film 1 µm window, 1050|Rp 0\.(1|2) µm, 1050|Rp 0\.15 µm, 1000|ramp 1|film 2 µm window, ramp 2/;

export interface SpacingCase {
  name: string;
  recipe: Recipe;
  gapUm: number;
  /** exact narrowest stripe, µm */
  exactUm: number;
}

/**
 * Spacing cases with exact answers: two equal windows of a film or an implant with constant D,
 * whose field K·v(z)·[l_a(x) + l_b(x)] is separable. The junctions are mirror images about the
 * stripe's centre line, so their closest approach is twice the distance from that line to the
 * widest point of either, at the depth z* where v is largest: gap(s) = s − 2·e(s), e the
 * extent beyond the edge at z* in the pair's field; the narrowest stripe solves gap(s) = g
 * (bisection), and for g = 0 the field at the centre line at z* is NB.
 */
export function spacingCases(pick: RegExp = SPACING_CASES): SpacingCase[] {
  const out: SpacingCase[] = [];
  for (const c of coverageCases(depthOf)) {
    if (c.family === 'constant source' || !pick.test(c.name)) continue;
    for (const gapUm of [0, 0.3]) {
      const recipe = parseRecipe(c.recipe);
      out.push({ name: `${c.name}, gap ${gapUm} µm`, recipe, gapUm, exactUm: exactStripe(c, recipe, gapUm) });
    }
  }
  return out;
}

function exactStripe(c: CoverageCase, recipe: Recipe, gapUm: number): number {
  const zStar = c.exact.lateralReachDepthLeftUm ?? 0;
  // The cross-section's depth is sized from the diffusion length, not the stripe.
  const depth = depthOf(pairRecipe(recipe, 4) as unknown as Record<string, unknown>);
  const pairField = (s: number) => {
    const pair = pairRecipe(recipe, s);
    const [[a0, a1], [b0, b1]] = pair.mask.windows as [number, number][];
    const one = c.field!(a0, a1, pair.crossSection.widthUm, depth);
    const two = c.field!(b0, b1, pair.crossSection.widthUm, depth);
    return { f: (x: number) => one(x, zStar) + two(x, zStar), edge: a1, centre: 0.5 * (a1 + b0) };
  };
  const gap = (s: number) => {
    const { f, edge, centre } = pairField(s);
    if (f(centre) >= COVERAGE_NB) return -1;
    return 2 * (centre - bisect((x) => f(x) - COVERAGE_NB, edge, centre));
  };
  return bisect((s) => gap(s) - gapUm, 1e-3, 20, 1e-9);
}

/** Runs the spacing study: the search on meshes h, 2h, 4h (its own error bar) against the exact stripe. */
export function spacingCoverage(cases: SpacingCase[], toleranceUm: number): CoverageRow[] {
  return cases.map((c) => {
    const found = searchStripeWithError(c.recipe, { gapUm: c.gapUm, toleranceUm, levels: 2 });
    return row(c.name, 'stripeUm', found.stripeUm, found.stripeErrorUm!, c.exactUm, 'exact');
  });
}

export function coverageTable(rows: CoverageRow[]): string {
  const lines = rows.map((r) => `${r.name.padEnd(52)} ${r.quantity.padEnd(24)} ${r.value.toFixed(5)} ± ${r.bar.toExponential(2)}  true ${r.truth.toFixed(5)} (${r.reference.padEnd(11)}) error ${r.trueError.toExponential(2)}  bar/error ${(r.bar / Math.max(r.trueError, TRUE_ERROR_FLOOR_UM)).toFixed(1).padStart(6)}${r.brackets ? '' : '  MISSES'}${r.tight ? '' : '  LOOSE'}`);
  return lines.join('\n');
}

export function coverageSummary(rows: CoverageRow[]): { n: number; bracketShare: number; tightShare: number; medianRatio: number } {
  const ratios = rows.map((r) => r.bar / Math.max(r.trueError, TRUE_ERROR_FLOOR_UM)).sort((a, b) => a - b);
  return {
    n: rows.length,
    bracketShare: rows.filter((r) => r.brackets).length / rows.length,
    tightShare: rows.filter((r) => r.tight).length / rows.length,
    medianRatio: ratios[ratios.length >> 1],
  };
}
