import { describe, expect, it } from 'vitest';
import { arrheniusUm2PerS, erfcDose, erfcJunctionDepth, erfcProfile } from '../support/closed-forms.ts';
import { predepositionRecipe, TEST_DOPANT } from '../support/recipes.ts';
import { columnAtX, minimum, solve } from '../support/solve.ts';

// A 20 µm window, 10 µm from each wall, is ~75 diffusion lengths wide: its centre is 1D.
const T = 1050;
const MINUTES = 60;
const CS = 1e20;
const NB = 1e16;
const dt = arrheniusUm2PerS(TEST_DOPANT.D0Cm2PerS, TEST_DOPANT.EaEv, T) * MINUTES * 60;
const run = solve(predepositionRecipe({ widthUm: 40, windows: [[10, 30]], cs: CS, background: NB, temperatureC: T, minutes: MINUTES }));
const window = run.report.windows[0];

describe('constant-source diffusion through a wide window, default mesh', () => {
  it('centre profile matches Cs·erfc(z/2√(Dt)) within 0.5 % of Cs everywhere and 0.5 % relative down to Cs/100', () => {
    // closed form: constant surface concentration in 1D (REFERENCES.md)
    const profile = columnAtX(run.plan.mesh, run.sim.concentration.Q, 20);
    let worstOfCs = 0;
    let worstRelative = 0;
    run.plan.mesh.z.forEach((z, j) => {
      const exact = erfcProfile(z, CS, dt);
      worstOfCs = Math.max(worstOfCs, Math.abs(profile[j] - exact) / CS);
      if (exact >= CS / 100) worstRelative = Math.max(worstRelative, Math.abs(profile[j] - exact) / exact);
    });
    console.log(`erfc profile: worst error ${(worstOfCs * 100).toExponential(2)} % of Cs, worst relative (C ≥ Cs/100) ${(worstRelative * 100).toFixed(3)} %`);
    expect(worstOfCs).toBeLessThan(0.005);
    expect(worstRelative).toBeLessThan(0.005);
  });

  it('dose down the window centre matches 2·Cs·√(Dt/π) within 0.5 %', () => {
    // closed form: dose of the erfc profile (REFERENCES.md)
    expect(Math.abs(window.centreDoseCm2.Q / erfcDose(CS, dt) - 1)).toBeLessThan(0.005);
  });

  it('junction depth matches 2·√(Dt)·erfc⁻¹(NB/Cs) within 0.5 %', () => {
    // closed form; erfc⁻¹ from @stdlib (reference library)
    expect(Math.abs(window.junctionDepthUm! / erfcJunctionDepth(CS, NB, dt) - 1)).toBeLessThan(0.005);
  });

  it('surface stays at Cs in the window and no concentration goes negative', () => {
    expect(window.surfaceBySpeciesCm3.Q).toBe(CS);
    expect(minimum(run.sim.concentration.Q)).toBeGreaterThanOrEqual(0);
  });

  it('the dose ledger balances: what entered through the window is what is in the silicon (1e-12 relative)', () => {
    // conservation of the finite-volume scheme: an exact discrete identity
    expect(run.sim.ledger.Q.relativeImbalance).toBeLessThan(1e-12);
  });
});
