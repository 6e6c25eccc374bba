import { describe, expect, it } from 'vitest';
import { arrheniusUm2PerS, bisect, filmField } from '../support/closed-forms.ts';
import { filmRecipe, TEST_DOPANT } from '../support/recipes.ts';
import { solve } from '../support/solve.ts';

// Observed order of accuracy against the exact 2D film solution (REFERENCES.md) when the
// mesh spacing and the time-step ratio (Δt/t ∝ growth − 1) are refined together. The
// finite-volume discretisation and Peaceman–Rachford stepping are both second order.
describe('convergence under mesh and step refinement', () => {
  const T = 1050, MINUTES = 60, DOSE = 1e15, NB = 1e16, WIDTH = 24, X0 = 8, X1 = 16;
  const dt = arrheniusUm2PerS(TEST_DOPANT.D0Cm2PerS, TEST_DOPANT.EaEv, T) * MINUTES * 60;
  const levels = [0.5, 1, 2].map((refine) => {
    const growth = 1 + 0.14 / refine;
    const run = solve(filmRecipe({ widthUm: WIDTH, windows: [[X0, X1]], dose: DOSE, background: NB, temperatureC: T, minutes: MINUTES, mesh: { refine }, numerics: { stepGrowth: growth } }));
    const exact = { q: DOSE, dt, x0: X0, x1: X1, width: WIDTH, depth: run.plan.mesh.depthUm };
    const xj = bisect((z) => filmField(exact, 12, z) - NB, 0, run.plan.mesh.depthUm);
    const { mesh } = run.plan;
    // Maximum field error relative to the peak, over all nodes.
    let worst = 0;
    const peak = filmField(exact, 12, 0);
    for (let j = 0; j < mesh.nz; j++) for (let i = 0; i < mesh.nx; i++) {
      worst = Math.max(worst, Math.abs(run.sim.concentration.Q[j * mesh.nx + i] - filmField(exact, mesh.x[i], mesh.z[j])) / peak);
    }
    return { refine, xjError: Math.abs(run.report.windows[0].junctionDepthUm! - xj), fieldError: worst };
  });

  it('observed order is about 2 for the field and for the junction depth', () => {
    const order = (a: number, b: number) => Math.log2(a / b);
    const fieldOrders = [order(levels[0].fieldError, levels[1].fieldError), order(levels[1].fieldError, levels[2].fieldError)];
    const xjOrders = [order(levels[0].xjError, levels[1].xjError), order(levels[1].xjError, levels[2].xjError)];
    for (const l of levels) console.log(`refine ${l.refine}: max field error ${(l.fieldError * 100).toExponential(2)} % of peak, xj error ${l.xjError.toExponential(2)} µm`);
    console.log(`observed order: field ${fieldOrders.map((p) => p.toFixed(2)).join(', ')}; xj ${xjOrders.map((p) => p.toFixed(2)).join(', ')}`);
    for (const p of [...fieldOrders, ...xjOrders]) {
      expect(p).toBeGreaterThan(1.5);
      expect(p).toBeLessThan(2.6);
    }
  });
});
