import { describe, expect, it } from 'vitest';
import { filmRecipe, predepositionRecipe } from '../support/recipes.ts';
import { minimum, solve } from '../support/solve.ts';

// Conservation: a sealed surface and zero-flux walls keep every atom (common practice;
// an exact property of the conservative finite-volume scheme).
describe('dose conservation and positivity', () => {
  it('a film then a drive-in conserves the placed dose to 1e-9 relative, and nothing goes negative', () => {
    const run = solve(filmRecipe({ widthUm: 12, windows: [[3, 5], [7, 8]], dose: 3e14, temperatureC: 1100, minutes: 90 }));
    const placed = 3e14;
    expect(Math.abs(run.report.doseCm2.Q / placed - 1)).toBeLessThan(1e-9);
    expect(run.sim.ledger.Q.relativeImbalance).toBeLessThan(1e-9);
    expect(minimum(run.sim.concentration.Q)).toBeGreaterThanOrEqual(0);
  });

  it('a predeposition then a long drive-in conserves the predeposited dose to 1e-9 relative', () => {
    const recipe = predepositionRecipe({ widthUm: 16, windows: [[6, 10]], cs: 1e19, temperatureC: 1000, minutes: 20 });
    const withDrive = { ...recipe, steps: [...recipe.steps, { kind: 'drive-in', temperatureC: 1150, minutes: 120 }] };
    const before = solve(recipe).report.doseCm2.Q;
    const after = solve(withDrive);
    // Different meshes (the drive-in widens the auto-sized mesh) see the same entered dose only
    // approximately; on one mesh, the ledger must balance exactly.
    expect(after.sim.ledger.Q.relativeImbalance).toBeLessThan(1e-9);
    console.log(`predeposited dose ${before.toExponential(4)}, after the drive-in ${after.report.doseCm2.Q.toExponential(4)} cm^-2`);
    expect(Math.abs(after.report.doseCm2.Q / before - 1)).toBeLessThan(0.01);
    expect(minimum(after.sim.concentration.Q)).toBeGreaterThanOrEqual(0);
  });
});
