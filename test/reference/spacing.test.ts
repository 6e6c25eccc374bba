import { describe, expect, it } from 'vitest';
import { parseRecipe } from '../../packages/solver2d/src/recipe.ts';
import { pairRecipe, searchStripe, searchStripeWithError } from '../../packages/solver2d/src/stripe-search.ts';
import { arrheniusUm2PerS, bisect, erf } from '../support/closed-forms.ts';
import { filmRecipe, TEST_DOPANT } from '../support/recipes.ts';
import { solve } from '../support/solve.ts';

// Two windows of width W separated by a masked stripe s, each with a fixed dose, sealed
// surface, drive-in: the exact 2D film solution of REFERENCES.md for one window, and the two
// superpose (the equation is linear). The margins to the side walls are 60·√(Dt), so the
// walls' mirror images change nothing at the precision checked.
const T = 1050, MINUTES = 60, DOSE = 1e15, NB = 1e16, W = 4, MARGIN = 8;
const dt = arrheniusUm2PerS(TEST_DOPANT.D0Cm2PerS, TEST_DOPANT.EaEv, T) * MINUTES * 60;
const L = Math.sqrt(dt);
const A = DOSE / (Math.sqrt(Math.PI * dt) * 1e-4);

/** Exact surface concentration with the windows at [−s/2 − W, −s/2] and [s/2, s/2 + W]. */
function surface(s: number, x: number): number {
  const one = (x0: number, x1: number) => 0.5 * (erf((x1 - x) / (2 * L)) - erf((x0 - x) / (2 * L)));
  return A * (one(-s / 2 - W, -s / 2) + one(s / 2, s / 2 + W));
}

const single = (mesh?: Record<string, number>) =>
  parseRecipe(filmRecipe({ widthUm: 2 * MARGIN + W, windows: [[MARGIN, MARGIN + W]], dose: DOSE, background: NB, temperatureC: T, minutes: MINUTES, mesh }));

describe('junction spacing across a masked stripe, exact 2D film case', () => {
  it('narrowest stripe before the junctions merge (gap 0) matches the closed form, inside its error bar', () => {
    // The exact concentration is lowest at the stripe centre on the surface, so the junctions
    // first touch there: the stripe s* solves C(0, 0; s*) = NB.
    const exact = bisect((s) => surface(s, 0) - NB, 1e-6, 10 * W);
    const tol = 2e-3;
    const found = searchStripeWithError(single(), { gapUm: 0, toleranceUm: tol, levels: 2 });
    const error = Math.abs(found.stripeUm - exact);
    console.log(`merge stripe: exact ${exact.toFixed(5)} µm, found ${found.stripeUm.toFixed(5)} ± ${found.stripeErrorUm} µm ` +
      `(meshes h, 2h, 4h: ${found.stripesByMeshUm.map((v) => v.toFixed(4)).join(', ')}; ${found.solves.length} solves on h)`);
    expect(found.bracketUm[1] - found.bracketUm[0]).toBeLessThanOrEqual(tol);
    expect(found.spacing.merged).toBe(false);
    expect(error / exact).toBeLessThan(0.01);
    expect(error).toBeLessThanOrEqual(found.stripeErrorUm! + tol);
  });

  it('narrowest stripe for a 0.3 µm gap matches the closed form within 1 %', () => {
    // With the junctions farthest out at the surface, the closest approach is the surface gap:
    // solve for the stripe whose surface crossings are 0.3 µm apart.
    const gap = 0.3;
    const merge = bisect((s) => surface(s, 0) - NB, 1e-6, 10 * W);
    const crossing = (s: number) => bisect((x) => surface(s, x) - NB, 0, s / 2);
    const exact = bisect((s) => 2 * crossing(s) - gap, merge + 1e-9, 10 * W);
    const found = searchStripe(single(), { gapUm: gap, toleranceUm: 2e-3 });
    console.log(`stripe for a ${gap} µm gap: exact ${exact.toFixed(5)} µm, found ${found.stripeUm.toFixed(5)} µm`);
    expect(Math.abs(found.stripeUm / exact - 1)).toBeLessThan(0.01);
    expect(found.spacing.minimumGapUm!).toBeGreaterThanOrEqual(gap);
  });

  it('reports the surface gap of a pair by the closed form, and flags a merged pair', () => {
    const apart = solve(pairRecipe(single(), 2.0)).report.spacings![0];
    const crossing = bisect((x) => surface(2.0, x) - NB, 0, 1.0);
    expect(apart.merged).toBe(false);
    expect(apart.stripeUm).toBeCloseTo(2.0, 12);
    // The closed form's junction stands vertical at the sealed surface and retreats below it,
    // so the closest approach is the surface gap.
    expect(Math.abs(apart.surfaceGapUm! - 2 * crossing)).toBeLessThan(0.01 * 2 * crossing);
    expect(Math.abs(apart.minimumGapUm! - apart.surfaceGapUm!)).toBeLessThan(1e-3);
    const merged = solve(pairRecipe(single(), 0.5)).report.spacings![0];
    expect(surface(0.5, 0)).toBeGreaterThan(NB);
    expect(merged).toMatchObject({ merged: true, surfaceGapUm: 0, minimumGapUm: 0 });
  });
});
