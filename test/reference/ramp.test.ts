import { describe, expect, it } from 'vitest';
import { arrheniusUm2PerS } from '../support/closed-forms.ts';
import { filmRecipe, TEST_DOPANT } from '../support/recipes.ts';
import { solve } from '../support/solve.ts';

/** Composite Simpson's rule on n (even) intervals: an independent quadrature. */
function simpson(f: (t: number) => number, a: number, b: number, n = 20000): number {
  const h = (b - a) / n;
  let s = f(a) + f(b);
  for (let k = 1; k < n; k++) s += (k % 2 ? 4 : 2) * f(a + k * h);
  return (s * h) / 3;
}

const D = (t: number) => arrheniusUm2PerS(TEST_DOPANT.D0Cm2PerS, TEST_DOPANT.EaEv, t);

describe('temperature ramps', () => {
  const ramp = { from: 850, to: 1100, minutes: 50 };
  const base = filmRecipe({ widthUm: 30, windows: [[10, 20]], dose: 5e14, temperatureC: 1050, minutes: 1 });
  const ramped = solve({ ...base, steps: [base.steps[0], { kind: 'drive-in', temperatureC: [ramp.from, ramp.to], minutes: ramp.minutes }] });
  const budget = simpson((t) => D(ramp.from + ((ramp.to - ramp.from) * t) / (ramp.minutes * 60)), 0, ramp.minutes * 60);

  it('the ramp\'s thermal budget ∫D dt matches an independent Simpson quadrature of D(T(t)) (1e-8; 1e-5 as rounded in the report)', () => {
    const reported = ramped.report.steps[1].thermalBudgetUm2.Q;
    expect(Math.abs(reported / budget - 1)).toBeLessThan(1e-5);
    expect(Math.abs(ramped.plan.steps[1].budgetUm2.Q / budget - 1)).toBeLessThan(1e-8);
  });

  it('a ramp and the isothermal step of equal budget give the same junction (linear case, 0.2 %)', () => {
    // With D depending on time only, C depends on ∫D dt alone (a change of time variable).
    const iso = 1000;
    const minutes = budget / D(iso) / 60;
    const flat = solve({ ...base, steps: [base.steps[0], { kind: 'drive-in', temperatureC: iso, minutes }] });
    const a = ramped.report.windows[0];
    const b = flat.report.windows[0];
    console.log(`ramp ${ramp.from}→${ramp.to} °C: xj ${a.junctionDepthUm} µm; isothermal ${minutes.toFixed(2)} min at ${iso} °C: xj ${b.junctionDepthUm} µm`);
    expect(Math.abs(a.junctionDepthUm! / b.junctionDepthUm! - 1)).toBeLessThan(0.002);
    expect(Math.abs(a.lateralLeftUm! / b.lateralLeftUm! - 1)).toBeLessThan(0.002);
  });

  it('a ramp down gives the same budget as the ramp up over the same range (symmetry of ∫D dt)', () => {
    const down = solve({ ...base, steps: [base.steps[0], { kind: 'drive-in', temperatureC: [ramp.to, ramp.from], minutes: ramp.minutes }] });
    expect(Math.abs(down.report.steps[1].thermalBudgetUm2.Q / budget - 1)).toBeLessThan(1e-5);
    expect(Math.abs(down.report.windows[0].junctionDepthUm! / ramped.report.windows[0].junctionDepthUm! - 1)).toBeLessThan(0.002);
  });
});
