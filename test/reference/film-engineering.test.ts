import { describe, expect, it } from 'vitest';
import { coarseReports, withErrorBars } from '../../packages/solver2d/src/error-estimate.ts';
import { MOBILITY_FITS } from '../../packages/solver2d/src/mobility.ts';
import { parseRecipe } from '../../packages/solver2d/src/recipe.ts';
import {
  filmEdgeRadius, filmJunctionDepth, filmLateral, filmRegionConductance, filmSheetConductance, type FilmWindow,
} from '../support/engineering-forms.ts';
import { filmRecipe } from '../support/recipes.ts';
import { solve } from '../support/solve.ts';

// The exact 2D film case of REFERENCES.md: a fixed dose in a window, sealed surface, drive-in.
// C = Q/√(πDt)·exp(−z²/4Dt)·½[erf((a−x)/2√(Dt)) + erf((a+x)/2√(Dt))], walls far enough away
// (more than 40·√(Dt) from the window) to leave it unchanged. Default mesh, as a user gets it.
const T = 1050, MINUTES = 60, DOSE = 1e15, NB = 1e16, X0 = 10, X1 = 30, WIDTH = 40;
const recipe = parseRecipe(filmRecipe({ widthUm: WIDTH, windows: [[X0, X1]], dose: DOSE, background: NB, temperatureC: T, minutes: MINUTES }));
const run = solve(recipe);
const coarse = coarseReports(recipe, { levels: 2 });
const report = withErrorBars([run.report, ...coarse], recipe);
const w = report.windows[0];
const exact: FilmWindow = { q: DOSE, dt: run.plan.thermalBudgetUm2.Q, a: 0.5 * (X1 - X0), nb: NB };
const fit = MOBILITY_FITS.boron; // the test dopant is an acceptor: a p layer, hole mobility

describe('error bars on the exact 2D film case, default mesh', () => {
  const xj = filmJunctionDepth(exact);
  const lateral = filmLateral(exact);
  const radius = filmEdgeRadius(exact).radius;

  it('the true error of xj lies inside ± (closed form)', () => {
    const error = Math.abs(w.junctionDepthUm! - xj);
    console.log(`xj ${w.junctionDepthUm} exact ${xj.toFixed(6)}: error ${error.toExponential(2)} µm, ± ${w.errors!.junctionDepthUm} µm`);
    expect(error).toBeLessThanOrEqual(w.errors!.junctionDepthUm!);
    // A bar is only worth having if it is tight: here within 1 % of xj (common practice).
    expect(w.errors!.junctionDepthUm!).toBeLessThan(0.01 * xj);
  });

  it('the true error of the lateral encroachment, left and right, lies inside ± (closed form)', () => {
    for (const [value, bar] of [[w.lateralLeftUm!, w.errors!.lateralLeftUm!], [w.lateralRightUm!, w.errors!.lateralRightUm!]]) {
      const error = Math.abs(value - lateral);
      console.log(`lateral ${value} exact ${lateral.toFixed(6)}: error ${error.toExponential(2)} µm, ± ${bar} µm`);
      expect(error).toBeLessThanOrEqual(bar);
      expect(bar).toBeLessThan(0.01 * lateral);
    }
  });

  it('the true error of the edge radius lies inside ± (closed form of the implicit-curve curvature)', () => {
    const error = Math.abs(w.curvatureRadiusLeftUm! - radius);
    console.log(`edge radius ${w.curvatureRadiusLeftUm} exact ${radius.toFixed(6)}: error ${error.toExponential(2)} µm, ± ${w.errors!.curvatureRadiusLeftUm} µm`);
    expect(error).toBeLessThanOrEqual(w.errors!.curvatureRadiusLeftUm!);
    expect(Math.abs(w.curvatureRadiusRightUm! - radius)).toBeLessThanOrEqual(w.errors!.curvatureRadiusRightUm!);
  });

  it('the measured order of convergence is about 2, the scheme\'s formal order (Peaceman–Rachford, finite volumes)', () => {
    console.log(`observed order ${report.errorEstimate!.observedOrder}; meshes ${JSON.stringify(report.errorEstimate!.meshes)}`);
    expect(report.errorEstimate!.observedOrder).toBeGreaterThan(1.5);
    expect(report.errorEstimate!.observedOrder).toBeLessThan(2.6);
  });
});

describe('sheet and line resistance on the exact 2D film case', () => {
  it('sheet resistance at the window centre matches the quadrature of the exact profile within 0.2 %', () => {
    // Irvin (1962): Rs = 1/∫q·μ·|Nnet| dz; reference by Gauss–Legendre on the closed form.
    const rs = 1 / filmSheetConductance(exact, fit);
    console.log(`Rs ${w.sheetResistanceOhmSq} Ω/sq, exact-profile quadrature ${rs.toFixed(3)} Ω/sq`);
    expect(Math.abs(w.sheetResistanceOhmSq! / rs - 1)).toBeLessThan(0.002);
  });

  it('effective width matches the quadrature of the exact 2D field within 0.2 %', () => {
    const g = filmRegionConductance(exact, fit);
    const wEff = (g * 1e-4) / filmSheetConductance(exact, fit);
    console.log(`W eff ${w.effectiveWidthUm} µm, exact-field quadrature ${wEff.toFixed(5)} µm; drawn ${X1 - X0}, drawn + 2·lateral ${w.drawnPlusLateralUm}`);
    expect(Math.abs(w.effectiveWidthUm! / wEff - 1)).toBeLessThan(0.002);
    expect(Math.abs(w.lineResistanceOhmPerUm! * g / 1e4 - 1)).toBeLessThan(0.002);
  });

  it('the electrical width lies between the drawn width and the width of the junction at the surface', () => {
    // The lightly doped edge adds conductance, but less than a full-depth layer would.
    expect(w.effectiveWidthUm!).toBeGreaterThan(X1 - X0);
    expect(w.effectiveWidthUm!).toBeLessThan(w.drawnPlusLateralUm!);
  });
});
