import { describe, expect, it } from 'vitest';
import { solve } from '../support/solve.ts';

// Transient enhanced diffusion of a boron implant ("+1" pool, {311} lifetime; see
// interstitials.ts). Recipes are invented test scenarios.
const IMPLANT = { kind: 'implant', dopant: 'B', doseCm2: 1e14, projectedRangeUm: 0.1, straggleUm: 0.035 };

function recipe(steps: Record<string, unknown>[], extra: Record<string, unknown> = {}) {
  return {
    title: 'test: boron implant anneal, TED (invented)',
    substrate: { dopant: 'P', concentrationCm3: 1e16 },
    crossSection: { widthUm: 6 },
    mask: { windows: [[1.5, 4.5]] },
    ...extra,
    steps,
  };
}

const asImplanted = solve(recipe([IMPLANT])).report.windows[0].junctionDepthUm!;

function junctionAfter(temperatureC: number, minutes: number, extra: Record<string, unknown> = {}) {
  const run = solve(recipe([IMPLANT, { kind: 'anneal', temperatureC, minutes }], extra));
  return { xj: run.report.windows[0].junctionDepthUm!, lateral: run.report.windows[0].lateralLeftUm!, run };
}

describe('TED of a boron implant (1e14 cm⁻², Rp 0.1 µm)', () => {
  it('800 °C 30 min: the junction moves ≥ 5× as far as without TED (issue criterion; tens of nm against a few, common practice)', () => {
    const on = junctionAfter(800, 30);
    const off = junctionAfter(800, 30, { physics: { ted: false } });
    const shiftOn = on.xj - asImplanted;
    const shiftOff = off.xj - asImplanted;
    console.log(`TED 800 °C 30 min: xj ${asImplanted.toFixed(4)} → ${off.xj.toFixed(4)} µm without TED, ${on.xj.toFixed(4)} µm with ` +
      `(shift ${(shiftOff * 1e3).toFixed(1)} nm → ${(shiftOn * 1e3).toFixed(1)} nm, ${(shiftOn / shiftOff).toFixed(0)}×), ` +
      `factor ${on.run.report.steps[1].enhancement?.B.ted}`);
    expect(shiftOff).toBeLessThan(0.005);
    expect(shiftOn).toBeGreaterThan(0.02);
    expect(shiftOn / shiftOff).toBeGreaterThanOrEqual(5);
  });

  it('1100 °C 60 min: with and without TED within 5 % (the transient is over in a fraction of a second)', () => {
    const on = junctionAfter(1100, 60);
    const off = junctionAfter(1100, 60, { physics: { ted: false } });
    console.log(`TED 1100 °C 60 min: xj ${off.xj.toFixed(4)} µm without, ${on.xj.toFixed(4)} µm with (${((on.xj / off.xj - 1) * 100).toFixed(2)} %)`);
    expect(Math.abs(on.xj / off.xj - 1)).toBeLessThan(0.05);
  });

  it('the pool carries over: 800 °C 15 min then 15 min more ends where 30 min does (2 %)', () => {
    const once = junctionAfter(800, 30).xj;
    const twice = solve(recipe([IMPLANT, { kind: 'anneal', temperatureC: 800, minutes: 15 }, { kind: 'anneal', temperatureC: 800, minutes: 15 }]))
      .report.windows[0].junctionDepthUm!;
    expect(Math.abs(twice / once - 1)).toBeLessThan(0.02);
  });

  it('conserves the dose in the sealed anneal to 1e-9', () => {
    const { run } = junctionAfter(800, 30);
    expect(run.sim.ledger.B.relativeImbalance).toBeLessThan(1e-9);
  });
});

describe('TED switched off, or on where it cannot act, gives the model-free answer to 1e-9', () => {
  // A species of the recipe's own with boron's parameters (Fair's D⁰ and D⁺, from memory, as
  // in dopants.ts): neither TED nor OED applies to it, so it runs the model-free path.
  const twin = { type: 'acceptor', D0Cm2PerS: 0.037, EaEv: 3.46, singlyCharged: { D0Cm2PerS: 0.72, EaEv: 3.46 } };
  const steps = (dopant: string) => [{ ...IMPLANT, dopant }, { kind: 'anneal', temperatureC: 850, minutes: 20, ambient: 'steam' }];

  it('boron with both switches off against its twin', () => {
    const off = solve(recipe(steps('B'), { physics: { ted: false, oxidationEnhanced: false } }));
    const reference = solve(recipe(steps('Bt'), { dopants: { Bt: twin } }));
    const a = off.sim.concentration.B;
    const b = reference.sim.concentration.Bt;
    let worst = 0;
    for (let k = 0; k < a.length; k++) worst = Math.max(worst, Math.abs(a[k] - b[k]) / 1e18);
    expect(worst).toBeLessThan(1e-9);
    expect(off.report.windows[0].junctionDepthUm).toBe(reference.report.windows[0].junctionDepthUm);
    expect(off.report.steps[1].enhancement).toBeUndefined();
  });
});

describe('TED converges in time steps and in mesh (order ≥ 1)', () => {
  const at = (extra: Record<string, unknown>) => junctionAfter(800, 30, extra).xj;

  it('time steps: error in xj against growth 1.003 falls at least as fast as 1/N over growth 1.1, 1.05, 1.025 (self-convergence)', () => {
    const solveAt = (g: number) => junctionAfter(800, 30, { numerics: { stepGrowth: g } });
    const reference = solveAt(1.003).xj;
    const runs = [1.1, 1.05, 1.025].map(solveAt);
    const errors = runs.map((r) => Math.abs(r.xj - reference));
    const counts = runs.map((r) => r.run.report.steps[1].timeSteps);
    // Least-squares slope of log(error) against log(time steps).
    const lx = counts.map(Math.log);
    const ly = errors.map(Math.log);
    const mx = lx.reduce((a, b) => a + b) / 3;
    const my = ly.reduce((a, b) => a + b) / 3;
    const slope = lx.reduce((sum, x, k) => sum + (x - mx) * (ly[k] - my), 0) / lx.reduce((sum, x) => sum + (x - mx) ** 2, 0);
    console.log(`TED steps: ${counts.join(', ')} time steps, xj errors ${errors.map((e) => e.toExponential(2)).join(', ')} µm; order ${(-slope).toFixed(2)}`);
    expect(errors[0] / reference).toBeLessThan(1e-3);
    expect(-slope).toBeGreaterThanOrEqual(1);
  });

  it('mesh: xj at refine 0.5, 1, 2 (self-convergence)', () => {
    const [a, b, c] = [0.5, 1, 2].map((refine) => at({ mesh: { refine } }));
    const order = Math.log2(Math.abs(a - b) / Math.abs(b - c));
    console.log(`TED mesh: xj ${a.toFixed(5)}, ${b.toFixed(5)}, ${c.toFixed(5)} µm; observed order ${order.toFixed(2)}`);
    expect(Math.abs(b - c) / c).toBeLessThan(0.01);
    expect(order).toBeGreaterThanOrEqual(1);
  });
});
