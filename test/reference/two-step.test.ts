import { describe, expect, it } from 'vitest';
import { arrheniusUm2PerS, erfcDose } from '../support/closed-forms.ts';
import { TEST_DOPANT } from '../support/recipes.ts';
import { columnAtX, solve } from '../support/solve.ts';

// Predeposition then a long drive-in: once the drive-in's Dt is much larger than the
// predeposition's, the profile tends to the Gaussian of a thin layer with the
// predeposited dose, C = Q/√(πDt)·exp(−z²/4Dt) (REFERENCES.md).
describe('predeposition then a long drive-in', () => {
  const pre = { t: 900, minutes: 10 };
  const drive = { t: 1150, minutes: 120 };
  const cs = 1e20;
  const run = solve({
    title: 'test: two-step diffusion (invented)',
    substrate: { dopant: 'P', concentrationCm3: 1e15 },
    crossSection: { widthUm: 60 },
    mask: { windows: [[15, 45]] },
    dopants: { Q: TEST_DOPANT },
    steps: [
      { kind: 'predeposition', dopant: 'Q', surfaceConcentrationCm3: cs, temperatureC: pre.t, minutes: pre.minutes },
      { kind: 'drive-in', temperatureC: drive.t, minutes: drive.minutes },
    ],
  });
  const dtPre = arrheniusUm2PerS(TEST_DOPANT.D0Cm2PerS, TEST_DOPANT.EaEv, pre.t) * pre.minutes * 60;
  const dtTotal = dtPre + arrheniusUm2PerS(TEST_DOPANT.D0Cm2PerS, TEST_DOPANT.EaEv, drive.t) * drive.minutes * 60;
  const q = erfcDose(cs, dtPre);

  it('the drive-in is the long step (Dt ratio above 100), so the Gaussian limit applies', () => {
    expect(dtTotal / dtPre).toBeGreaterThan(100);
  });

  it('keeps the predeposited dose 2·Cs·√(Dt/π) (closed form; 1 %)', () => {
    expect(Math.abs(run.report.windows[0].centreDoseCm2.Q / q - 1)).toBeLessThan(0.01);
  });

  it('the centre profile matches Q/√(πDt)·exp(−z²/4Dt) within 2 % of its peak', () => {
    const profile = columnAtX(run.plan.mesh, run.sim.concentration.Q, 30);
    const peak = q / (Math.sqrt(Math.PI * dtTotal) * 1e-4);
    let worst = 0;
    run.plan.mesh.z.forEach((z, j) => {
      worst = Math.max(worst, Math.abs(profile[j] - peak * Math.exp(-(z * z) / (4 * dtTotal))) / peak);
    });
    console.log(`two-step: worst deviation from the Gaussian limit ${(worst * 100).toFixed(2)} % of the peak`);
    expect(worst).toBeLessThan(0.02);
  });

  it('the surface concentration falls during the drive-in while the dose is kept (common practice)', () => {
    expect(run.report.windows[0].surfaceBySpeciesCm3.Q).toBeLessThan(0.2 * cs);
    expect(run.sim.ledger.Q.relativeImbalance).toBeLessThan(1e-9);
  });
});
