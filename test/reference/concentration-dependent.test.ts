import { describe, expect, it } from 'vitest';
import { electronsRef, niRef } from '../support/physics.ts';
import { analyze, parseRecipe, planRecipe, simulate } from '../../packages/solver2d/src/index.ts';
import { columnAtX, solve } from '../support/solve.ts';
import { arrheniusUm2PerS } from '../support/closed-forms.ts';

// A donor whose diffusion is almost all through singly charged defects (D⁻ of arsenic as
// recalled from Fair 1981; the neutral term made negligible), so that far above ni
// D = h·D⁻·(n/ni) ∝ C. Fair (1981): the constant-source profile is then box-like with
// xj ≈ 1.6·√(Ds·t), Ds the diffusivity at the surface (from memory).
const T = 1000;
const MINUTES = 60;
const CS = 2e21;
const NB = 1e16;
const DOPANT = { type: 'donor', D0Cm2PerS: 1e-9, EaEv: 3.44, singlyCharged: { D0Cm2PerS: 12.0, EaEv: 4.05 } };

/** The donor Xd into NB of boron through one window, with the given steps (invented scenarios). */
function xdRecipe(title: string, widthUm: number, window: [number, number], steps: object[], stepGrowth?: number) {
  return {
    title, substrate: { dopant: 'B', concentrationCm3: NB }, crossSection: { widthUm }, mask: { windows: [window] },
    dopants: { Xd: DOPANT }, ...(stepGrowth ? { numerics: { stepGrowth } } : {}), steps,
  };
}

function recipe(stepGrowth?: number) {
  return xdRecipe('test: D ∝ C constant source (invented)', 10, [2, 8],
    [{ kind: 'predeposition', dopant: 'Xd', surfaceConcentrationCm3: CS, temperatureC: T, minutes: MINUTES }], stepGrowth);
}

describe('concentration-dependent diffusion (charged-defect model, one species)', () => {
  const run = solve(recipe());
  const ni = niRef(T);
  const r = electronsRef(CS, ni) / ni;
  const h = 1 + CS / Math.sqrt(CS * CS + 4 * ni * ni);
  const ds = arrheniusUm2PerS(DOPANT.singlyCharged.D0Cm2PerS, DOPANT.singlyCharged.EaEv, T) * r * h;
  const xj = run.report.windows[0].junctionDepthUm!;

  it('xj ≈ 1.6·√(Ds·t) within 5 % (Fair 1981)', () => {
    const expected = 1.6 * Math.sqrt(ds * MINUTES * 60);
    console.log(`D ∝ C: xj ${xj.toFixed(4)} µm, 1.6·√(Ds·t) = ${expected.toFixed(4)} µm`);
    expect(Math.abs(xj / expected - 1)).toBeLessThan(0.05);
  });

  it('the profile is box-like: above half of Cs at half the junction depth (an erfc would be near 5 %)', () => {
    const profile = columnAtX(run.plan.mesh, run.sim.concentration.Xd, 5);
    const z = run.plan.mesh.z;
    let j = 0;
    while (z[j + 1] < xj / 2) j++;
    const t = (xj / 2 - z[j]) / (z[j + 1] - z[j]);
    expect(((1 - t) * profile[j] + t * profile[j + 1]) / CS).toBeGreaterThan(0.5);
  });

  it('results converge as the time steps shrink: each halving of the step growth moves xj less than the one before, growth 1.017 is within 0.15 % of a quarter of its steps, and so are the default steps', () => {
    // Where D depends on C, steps grow by at most 1 + 0.4/√s, s the peak speed-up over
    // intrinsic (see simulate.ts): s ≈ 560 here, a growth near 1.017; halve from there
    // (the lead-in's growth shrinks with it). The lead-in is backward Euler, first order in
    // the step (common practice: the textbook order of the method), so the changes should
    // shrink by about 2× a halving; 1.5× is asked. The 0.15 % is this project's accuracy
    // budget for time stepping, not an outside figure: the outside check is Fair's above.
    const depths = [1.017, 1.0085, 1.00425, 1.002125].map((g) => solve(recipe(g)).report.windows[0].junctionDepthUm!);
    console.log(`D ∝ C, xj at step growth 1.017, 1.0085, 1.00425, 1.002125: ${depths.map((d) => d.toFixed(5)).join(', ')} µm`);
    const changes = depths.slice(1).map((d, k) => Math.abs(d - depths[k]));
    expect(changes[1]).toBeLessThan(changes[0] / 1.5);
    expect(changes[2]).toBeLessThan(changes[1] / 1.5);
    expect(Math.abs(depths[0] / depths[2] - 1)).toBeLessThan(0.0015);
    // The default steps (growth from the speed-up, as simulate.ts sets it) against the finest
    // of these, to the same budget: a looser default growth would fail here (1 + 0.6/√s is
    // 0.37 % off).
    expect(Math.abs(xj / depths[3] - 1)).toBeLessThan(0.0015);
  });

  it('a step growth beyond the stable range is held to it rather than diverging', () => {
    const fast = solve(recipe(1.3)).report.windows[0].junctionDepthUm!;
    expect(Math.abs(fast / xj - 1)).toBeLessThan(0.001);
  });
});

// A fixed dose of the same donor, placed as a thin film and driven in with the surface
// sealed. Far above ni, D = 2·D⁻·C/ni (n/ni → C/ni, field factor h → 2), so with τ = a·t/2,
// a = 2·D⁻/ni, the profile obeys C_τ = (C²)_zz: the porous-medium equation with m = 2, whose
// instantaneous-source solution is Barenblatt's (Barenblatt 1952; Pattle, Q. J. Mech. Appl.
// Math. 12 (1959) 407; from memory), on the full line with mass M = 2Q (the sealed surface is
// its plane of symmetry):
//   C = τ^(−1/3)·(K − z²·τ^(−2/3)/12)₊,  M = (4/3)·√12·K^(3/2),  front z_f = √(12K)·τ^(1/3).
// The peak falls as t^(−1/3) through the anneal, and the time steps follow it (simulate.ts).
describe('concentration-dependent diffusion from a fixed dose (Barenblatt–Pattle solution)', () => {
  const DOSE = 2e16;
  const DRIVE_MINUTES = 30;
  const filmRecipe = (stepGrowth?: number) => xdRecipe('test: D ∝ C fixed dose, thin film then sealed drive-in (invented)', 12, [1, 11],
    [{ kind: 'film', dopant: 'Xd', doseCm2: DOSE }, { kind: 'drive-in', temperatureC: T, minutes: DRIVE_MINUTES }], stepGrowth);
  const ni = niRef(T);
  const a = (2 * arrheniusUm2PerS(DOPANT.singlyCharged.D0Cm2PerS, DOPANT.singlyCharged.EaEv, T)) / ni;
  const tau = (a * DRIVE_MINUTES * 60) / 2;
  // cm^-2 → cm^-3·µm: 1 cm = 1e4 µm
  const K = ((3 * 2 * DOSE * 1e4) / (4 * Math.sqrt(12))) ** (2 / 3);
  const front = Math.sqrt(12 * K) * Math.cbrt(tau);
  const progress: { done: number; total: number }[] = [];
  const plan = planRecipe(parseRecipe(filmRecipe()));
  const sim = simulate(plan, { onProgress: (p) => progress.push({ done: p.done, total: p.total }) });
  const column = columnAtX(plan.mesh, sim.concentration.Xd, 6);

  /** Depth where the centre column falls to `f` of its surface value, µm. */
  function depthAt(f: number): number {
    const z = plan.mesh.z;
    let j = 0;
    while (j + 1 < z.length && column[j + 1] > f * column[0]) j++;
    return z[j] + ((column[j] - f * column[0]) / (column[j] - column[j + 1])) * (z[j + 1] - z[j]);
  }

  it('the surface value is K·τ^(−1/3) and the depths at 0.9, 0.5 and 0.1 of it are z_f·√(1 − f), within 1 %', () => {
    const peak = K / Math.cbrt(tau);
    console.log(`fixed dose, D ∝ C: surface ${column[0].toExponential(4)} cm^-3 (Barenblatt ${peak.toExponential(4)}), front ${front.toFixed(4)} µm, ` +
      `${sim.stepRecords[1].timeSteps} time steps`);
    expect(Math.abs(column[0] / peak - 1)).toBeLessThan(0.01);
    for (const f of [0.9, 0.5, 0.1]) expect(Math.abs(depthAt(f) / (front * Math.sqrt(1 - f)) - 1)).toBeLessThan(0.01);
  });

  it('steps that follow the falling peak converge: the default is within 0.15 % of a step growth of 1.0025 in xj (the project\'s budget, as above)', () => {
    const xj = analyze(sim).report.windows[0].junctionDepthUm!;
    const fine = solve(filmRecipe(1.0025)).report.windows[0].junctionDepthUm!;
    expect(Math.abs(xj / fine - 1)).toBeLessThan(0.0015);
  });

  it('progress: the total never rises, never falls below what is done, and ends equal to it and to the steps taken', () => {
    for (let k = 1; k < progress.length; k++) expect(progress[k].total).toBeLessThanOrEqual(progress[k - 1].total);
    for (const p of progress) expect(p.done).toBeLessThanOrEqual(p.total);
    const last = progress[progress.length - 1];
    expect(last.done).toBe(last.total);
    expect(last.done).toBe(sim.stepRecords.reduce((n, s) => n + s.timeSteps, 0));
  });
});
