import { describe, expect, it } from 'vitest';
import { observedOrder, richardsonError, SAFETY_ASSUMED, SAFETY_MEASURED } from '../../packages/solver2d/src/error-bars.ts';
import { coarsenedRecipe } from '../../packages/solver2d/src/error-estimate.ts';
import { parseRecipe } from '../../packages/solver2d/src/recipe.ts';

// A quantity that behaves exactly as f(h) = f* + C·h^p (closed form): Richardson's estimate
// of the error of f(h) from f(2h) (and f(4h)) is then exact, times the safety factor.
const f = (h: number, p: number) => 3 + 0.7 * h ** p;

describe('Richardson error bars', () => {
  it('with two meshes and p = 2: the exact error times the two-mesh safety factor', () => {
    const truth = f(0.1, 2) - 3;
    expect(richardsonError(f(0.1, 2), f(0.2, 2))).toBeCloseTo(SAFETY_ASSUMED * truth, 12);
  });

  it('with three meshes: an order near 2 is measured and the exact error recovered, times the three-mesh factor', () => {
    expect(observedOrder(f(0.1, 2), f(0.2, 2), f(0.4, 2))).toBeCloseTo(2, 12);
    expect(richardsonError(f(0.1, 2), f(0.2, 2), f(0.4, 2))).toBeCloseTo(SAFETY_MEASURED * (f(0.1, 2) - 3), 12);
    expect(richardsonError(f(0.1, 1.9), f(0.2, 1.9), f(0.4, 1.9))).toBeCloseTo(SAFETY_MEASURED * (f(0.1, 1.9) - 3), 12);
  });

  it('a lower measured order (1.3) is used as it is, with the larger safety factor: the bar covers the slower convergence', () => {
    expect(observedOrder(f(0.1, 1.3), f(0.2, 1.3), f(0.4, 1.3))).toBeCloseTo(1.3, 12);
    expect(richardsonError(f(0.1, 1.3), f(0.2, 1.3), f(0.4, 1.3))).toBeCloseTo(SAFETY_ASSUMED * (f(0.1, 1.3) - 3), 12);
  });

  it('a measured order above what the scheme delivers (2) is not trusted: the cautious bound from the coarser pair', () => {
    const [f1, f2, f3] = [f(0.1, 3), f(0.2, 3), f(0.4, 3)];
    expect(richardsonError(f1, f2, f3)).toBeCloseTo(Math.max(f2 - f1, 0.5 * (f3 - f2)), 12);
    expect(richardsonError(f1, f2, f3)).toBeGreaterThan(f1 - 3);
    // A constant source's lateral on meshes h, 2h, 4h (observed order 6.2), against a solve 4×
    // finer (0.19620 µm): the bar must reach the true error of 5.2e-4 µm, where the measured
    // order would have given 9e-6 µm.
    const bar = richardsonError(0.19568, 0.19571, 0.19791);
    expect(bar).toBeGreaterThanOrEqual(Math.abs(0.19568 - 0.19620));
  });

  it('values that do not converge monotonically get the cautious bound, and never 0 while the solves differ', () => {
    expect(observedOrder(1.0, 1.1, 1.05)).toBeNull();
    expect(richardsonError(1.0, 1.1, 1.05)).toBeCloseTo(0.1, 12);
    expect(richardsonError(1.0, 1.0, 1.1)).toBeCloseTo(0.05, 12);
    expect(richardsonError(1.0, 1.0)).toBe(0);
    expect(richardsonError(1.0, 1.0, 1.0)).toBe(0);
  });

  it('a coarser recipe halves the mesh density and doubles Δt/t per level, keeping explicit counts in step', () => {
    const recipe = parseRecipe({
      substrate: { dopant: 'P', concentrationCm3: 1e15 }, crossSection: { widthUm: 10 }, mask: { windows: [[4, 6]] },
      mesh: { refine: 2, columns: 200, surfaceSpacingUm: 0.01 }, numerics: { stepGrowth: 1.1 },
      steps: [{ kind: 'predeposition', dopant: 'B', surfaceConcentrationCm3: 1e20, temperatureC: 1000, minutes: 10 }],
    });
    const c = coarsenedRecipe(recipe, 2);
    expect(c.mesh).toMatchObject({ refine: 0.5, columns: 50, surfaceSpacingUm: 0.04 });
    expect(c.numerics!.stepGrowth).toBeCloseTo(1.4, 12);
    expect(recipe.mesh!.refine).toBe(2);
  });
});
