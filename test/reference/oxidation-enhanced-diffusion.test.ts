import { describe, expect, it } from 'vitest';
import { spreadIntegral } from '../../packages/solver2d/src/interstitial-spread.ts';
import { OED_DIFFUSION_LENGTH_UM } from '../../packages/solver2d/src/interstitials.ts';
import { parseRecipe, planRecipe } from '../../packages/solver2d/src/index.ts';
import { DefectEnhancement } from '../../packages/solver2d/src/point-defect-enhancement.ts';
import { componentBudgets } from '../../packages/solver2d/src/coupled-diffusivity.ts';
import { bisect } from '../support/closed-forms.ts';
import { solve } from '../support/solve.ts';

// Oxidation-enhanced and -retarded diffusion (Deal–Grove rate → S_s − 1 = K·√(dx/dt) →
// spread under the mask with L; see interstitials.ts). Recipes are invented test scenarios.
const L = OED_DIFFUSION_LENGTH_UM;

function driveIn(o: { dopant?: string; ambient: string; widthUm: number; window: [number, number]; extra?: Record<string, unknown>; minutes?: number }) {
  const dopant = o.dopant ?? 'B';
  return {
    title: 'test: film and drive-in, OED (invented)',
    substrate: { dopant: dopant === 'B' ? 'P' : 'B', concentrationCm3: 1e15 },
    crossSection: { widthUm: o.widthUm },
    mask: { windows: [o.window] },
    ...o.extra,
    steps: [
      { kind: 'film', dopant, doseCm2: 1e14 },
      { kind: 'drive-in', temperatureC: 1100, minutes: o.minutes ?? 60, ambient: o.ambient },
    ],
  };
}

describe('OED of a boron drive-in, 1100 °C 60 min, a window wider than L (intrinsic D)', () => {
  // The window is the whole 60 µm section: S − 1 = u_s·exp(−z/L) below it.
  const wide = (ambient: string) => solve(driveIn({ ambient, widthUm: 60, window: [0, 60], extra: { diffusion: { model: 'intrinsic' } } }));
  const inert = wide('inert');
  const dry = wide('dry-oxygen');
  const steam = wide('steam');
  const xj = (r: typeof inert) => r.report.windows[0].junctionDepthUm!;
  const factor = (r: typeof inert) => r.report.steps[1].enhancement!.B.oxidation;

  it('dry oxygen: D about doubles (the calibration point, from memory: Plummer, Deal & Griffin ch. 7), time-averaged 2–2.5', () => {
    // The excess is 1 at the end of the hour and larger before, as the oxide is thinner.
    console.log(`OED factors at 1100 °C, 60 min: dry ${factor(dry)}, steam ${factor(steam)}`);
    expect(factor(dry)).toBeGreaterThan(2);
    expect(factor(dry)).toBeLessThan(2.5);
  });

  it('steam moves xj further than inert by √ of the enhancement (Gaussian of a film: xj = 2√(β·ln(Q/(N_B√(πβ)))), within the depth fall-off)', () => {
    // A film's exact profile at budget β: C = Q/√(πβ)·exp(−z²/4β); xj where C = N_B. With D
    // enhanced by F over the step the budget is F·β; S − 1 falls as exp(−z/L) with depth, so
    // at xj ≈ 1.5 µm the factor is some 15 % below its surface value and xj falls short of
    // the uniform-F closed form by a few per cent: the check allows 6 %.
    const beta = inert.plan.steps[1].intrinsicBudgetUm2.B;
    // Q/√(πβ) with Q in cm⁻² and β in µm²: 1e-4 cm per µm.
    const closed = (b: number) => bisect((z) => (1e14 / (Math.sqrt(Math.PI * b) * 1e-4)) * Math.exp(-(z * z) / (4 * b)) - 1e15, 0, 20);
    const expectedInert = closed(beta);
    const expectedSteam = closed(factor(steam) * beta);
    console.log(`OED xj: inert ${xj(inert).toFixed(4)} (closed form ${expectedInert.toFixed(4)}), dry ${xj(dry).toFixed(4)}, ` +
      `steam ${xj(steam).toFixed(4)} µm (uniform-F closed form ${expectedSteam.toFixed(4)})`);
    expect(Math.abs(xj(inert) / expectedInert - 1)).toBeLessThan(0.01);
    expect(xj(steam)).toBeGreaterThan(xj(dry));
    expect(xj(dry)).toBeGreaterThan(xj(inert));
    expect(xj(steam) / expectedSteam).toBeLessThan(1.001);
    expect(xj(steam) / expectedSteam).toBeGreaterThan(0.94);
  });

  it('conserves the dose in the sealed oxidising drive-in to 1e-9', () => {
    expect(steam.sim.ledger.B.relativeImbalance).toBeLessThan(1e-9);
    expect(dry.sim.ledger.B.relativeImbalance).toBeLessThan(1e-9);
  });

  it('reports the oxide grown (Deal–Grove: steam 1100 °C 1 h on (100) ≈ 0.64 µm)', () => {
    expect(steam.report.steps[1].oxideUm).toBeCloseTo(0.642, 3);
    expect(inert.report.steps[1].oxideUm).toBeUndefined();
  });
});

describe('OED under the mask edge', () => {
  it('the enhancement the solver applies falls under the mask as (½ − G(d/L))/½ of its edge value (the K₀ solution, 1e-3)', () => {
    // One window [0, 100] in a 200 µm section: its right edge is 10 L from every image.
    const plan = planRecipe(parseRecipe(driveIn({ ambient: 'steam', widthUm: 200, window: [0, 100], extra: { mesh: { columns: 400 } } })));
    const boron = plan.species[0];
    const st = plan.steps[1];
    const enhancement = new DefectEnhancement(plan, 1);
    enhancement.begin();
    const budgets = [componentBudgets(st, boron, 0, st.seconds)];
    enhancement.apply(st, [boron], [0], budgets, 0, st.seconds);
    const factor = enhancement.uniformNodes(1, 'B', 0);
    const { x } = plan.mesh;
    const excessAt = (i: number) => factor[i] - 1; // surface row; f_I = 1 for boron
    let edge = 0;
    while (x[edge + 1] < 100) edge++;
    // The far window interior: u_s (the wide-window value).
    const inside = excessAt(0);
    for (const d of [0.5, 2, 5, 10, 20]) {
      let i = edge;
      while (x[i] < 100 + d) i++;
      const expected = inside * (0.5 - spreadIntegral((x[i] - 100) / L, 0));
      expect(Math.abs(excessAt(i) - expected) / inside).toBeLessThan(1e-3);
    }
    // One diffusion length under the mask the excess is below a fifth of the window's.
    let i = edge;
    while (x[i] < 100 + L) i++;
    expect(excessAt(i) / inside).toBeLessThan(0.2);
  });

  it('lateral encroachment grows less than xj in steam, and differs from inert', () => {
    const narrow = (ambient: string) => solve(driveIn({ ambient, widthUm: 40, window: [15, 25] })).report.windows[0];
    const inert = narrow('inert');
    const steam = narrow('steam');
    const vertical = steam.junctionDepthUm! / inert.junctionDepthUm!;
    const lateral = steam.lateralLeftUm! / inert.lateralLeftUm!;
    console.log(`OED 10 µm window in steam: xj ×${vertical.toFixed(3)}, lateral ×${lateral.toFixed(3)} (inert lateral ${inert.lateralLeftUm} µm, steam ${steam.lateralLeftUm} µm)`);
    expect(lateral).toBeGreaterThan(1.05);
    expect(lateral).toBeLessThan(vertical);
  });
});

describe('oxidation-retarded diffusion of antimony', () => {
  it('steam drives an antimony film less deep than inert (C_V·C_I = C_V*·C_I*, f_I = 0.02)', () => {
    const run = (ambient: string) => solve(driveIn({ dopant: 'Sb', ambient, widthUm: 40, window: [10, 30] }));
    const inert = run('inert');
    const steam = run('steam');
    console.log(`ORD of Sb: xj ${inert.report.windows[0].junctionDepthUm} → ${steam.report.windows[0].junctionDepthUm} µm, factor ${steam.report.steps[1].enhancement!.Sb.oxidation}`);
    expect(steam.report.windows[0].junctionDepthUm!).toBeLessThan(0.9 * inert.report.windows[0].junctionDepthUm!);
    expect(steam.report.steps[1].enhancement!.Sb.oxidation).toBeLessThan(1);
    expect(steam.sim.ledger.Sb.relativeImbalance).toBeLessThan(1e-9);
  });
});

describe('OED switched off gives the inert answer to 1e-9', () => {
  it('a steam drive-in with oxidationEnhanced false equals the inert one node for node', () => {
    const off = solve(driveIn({ ambient: 'steam', widthUm: 24, window: [8, 16], extra: { physics: { oxidationEnhanced: false } } }));
    const inert = solve(driveIn({ ambient: 'inert', widthUm: 24, window: [8, 16] }));
    const a = off.sim.concentration.B;
    const b = inert.sim.concentration.B;
    let worst = 0;
    for (let k = 0; k < a.length; k++) worst = Math.max(worst, Math.abs(a[k] - b[k]) / 1e18);
    expect(worst).toBeLessThan(1e-9);
  });
});

describe('OED converges in time steps and in mesh (order ≥ 1)', () => {
  const at = (extra: Record<string, unknown>) =>
    solve(driveIn({ ambient: 'steam', widthUm: 24, window: [8, 16], minutes: 30, extra }));

  it('time steps: error in the lateral encroachment against growth 1.005 falls at least as 1/N (self-convergence)', () => {
    const reference = at({ numerics: { stepGrowth: 1.005 } }).report.windows[0].lateralLeftUm!;
    const runs = [1.2, 1.1, 1.05].map((g) => at({ numerics: { stepGrowth: g } }));
    const errors = runs.map((r) => Math.abs(r.report.windows[0].lateralLeftUm! - reference));
    const counts = runs.map((r) => r.report.steps[1].timeSteps);
    const slope = Math.log(errors[2] / errors[0]) / Math.log(counts[2] / counts[0]);
    console.log(`OED steps: ${counts.join(', ')} time steps, lateral errors ${errors.map((e) => e.toExponential(2)).join(', ')} µm; order ${(-slope).toFixed(2)}`);
    expect(-slope).toBeGreaterThanOrEqual(1);
  });

  it('mesh: xj at refine 0.5, 1, 2 (self-convergence)', () => {
    const [a, b, c] = [0.5, 1, 2].map((refine) => at({ mesh: { refine } }).report.windows[0].junctionDepthUm!);
    const order = Math.log2(Math.abs(a - b) / Math.abs(b - c));
    console.log(`OED mesh: xj ${a.toFixed(5)}, ${b.toFixed(5)}, ${c.toFixed(5)} µm; observed order ${order.toFixed(2)}`);
    expect(Math.abs(b - c) / c).toBeLessThan(0.01);
    expect(order).toBeGreaterThanOrEqual(1);
  });
});
