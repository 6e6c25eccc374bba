import { describe, expect, it } from 'vitest';
import { erf, erfc } from '../support/closed-forms.ts';
import { columnAtX, solve } from '../support/solve.ts';

// An implant with no anneal must return the profile it was given: a Gaussian in depth
// (dose Q, projected range Rp, straggle ΔRp) and, at a mask edge, ½·erfc(−d/(√2·ΔRl))
// laterally (common practice: the symmetric Gaussian range model).
describe('implant without anneal', () => {
  const spec = { doseCm2: 2e15, projectedRangeUm: 0.08, straggleUm: 0.025, lateralStraggleUm: 0.03 };
  const run = solve({
    title: 'test: implant, no anneal (invented)',
    substrate: { dopant: 'B', concentrationCm3: 1e16 },
    crossSection: { widthUm: 4 },
    mask: { windows: [[1, 3]] },
    steps: [{ kind: 'implant', dopant: 'As', ...spec }],
  });
  const { mesh } = run.plan;
  const profile = columnAtX(mesh, run.sim.concentration.As, 2);
  // The Gaussian truncated at the surface and scaled so the dose in silicon is Q.
  const inSilicon = 0.5 * (1 + erf(spec.projectedRangeUm / (Math.SQRT2 * spec.straggleUm)));
  const peak = spec.doseCm2 / (Math.sqrt(2 * Math.PI) * spec.straggleUm * 1e-4) / inSilicon;
  const gaussian = (z: number) => peak * Math.exp(-((z - spec.projectedRangeUm) ** 2) / (2 * spec.straggleUm ** 2));

  it('places the stated dose at the window centre (1e-6) and in total (1e-9 of open area)', () => {
    expect(Math.abs(run.report.windows[0].centreDoseCm2.As / spec.doseCm2 - 1)).toBeLessThan(1e-5);
    expect(Math.abs(run.sim.ledger.As.relativeImbalance)).toBeLessThan(1e-9);
  });

  it('peaks at the projected range (within one depth cell)', () => {
    let jPeak = 0;
    profile.forEach((v, j) => { if (v > profile[jPeak]) jPeak = j; });
    const cell = mesh.z[jPeak + 1] - mesh.z[jPeak];
    expect(Math.abs(mesh.z[jPeak] - spec.projectedRangeUm)).toBeLessThanOrEqual(cell);
  });

  it('follows the Gaussian in depth within 1 % of its peak (cell averages against point values)', () => {
    let worst = 0;
    mesh.z.forEach((z, j) => { worst = Math.max(worst, Math.abs(profile[j] - gaussian(z)) / peak); });
    expect(worst).toBeLessThan(0.01);
  });

  it('falls to half at the mask edge and follows ½·erfc laterally at the projected range (1 % of peak)', () => {
    let j = 0;
    while (mesh.z[j + 1] <= spec.projectedRangeUm) j++;
    let worst = 0;
    for (let i = 0; i < mesh.nx; i++) {
      const x = mesh.x[i];
      if (x > 2) continue;
      const lateral = 0.5 * erfc(-(x - 1) / (Math.SQRT2 * spec.lateralStraggleUm));
      worst = Math.max(worst, Math.abs(run.sim.concentration.As[j * mesh.nx + i] - gaussian(mesh.z[j]) * lateral) / peak);
    }
    expect(worst).toBeLessThan(0.01);
  });

  it('has no thermal budget and takes no time steps', () => {
    expect(run.report.steps[0].timeSteps).toBe(0);
    expect(run.report.thermalBudgetUm2.As).toBe(0);
  });
});
