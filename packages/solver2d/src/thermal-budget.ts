import type { StepPlan } from './plan-terms.ts';

/* Time integrals over a process step whose temperature is fixed or ramps linearly. */

/** Temperature at a time within a step (linear ramp), °C. */
export function temperatureAt(step: StepPlan, seconds: number): number {
  if (step.startC === null || step.endC === null) throw new Error(`steps[${step.index}] has no temperature`);
  return step.seconds > 0 ? step.startC + ((step.endC - step.startC) * seconds) / step.seconds : step.startC;
}

const GAUSS5 = [
  [0, 128 / 225],
  [-Math.sqrt(5 - 2 * Math.sqrt(10 / 7)) / 3, (322 + 13 * Math.sqrt(70)) / 900],
  [Math.sqrt(5 - 2 * Math.sqrt(10 / 7)) / 3, (322 + 13 * Math.sqrt(70)) / 900],
  [-Math.sqrt(5 + 2 * Math.sqrt(10 / 7)) / 3, (322 - 13 * Math.sqrt(70)) / 900],
  [Math.sqrt(5 + 2 * Math.sqrt(10 / 7)) / 3, (322 - 13 * Math.sqrt(70)) / 900],
] as const;

/** ∫ f over [a, b] by five-point Gauss–Legendre on `pieces` equal parts. */
export function integrate(f: (t: number) => number, a: number, b: number, pieces = 1): number {
  const h = (b - a) / pieces;
  let total = 0;
  for (let p = 0; p < pieces; p++) {
    const mid = a + (p + 0.5) * h;
    for (const [x, w] of GAUSS5) total += w * f(mid + 0.5 * h * x);
  }
  return 0.5 * h * total;
}

/** Pieces for budget quadrature: D changes by e-fold per ~10 °C, so a ramp gets many. */
function budgetPieces(step: StepPlan): number {
  return step.startC === step.endC ? 1 : 64;
}

/** ∫ f(T(t)) dt over the step, for any function of temperature. */
export function overStep(step: StepPlan, f: (temperatureC: number) => number, t0 = 0, t1 = step.seconds): number {
  if (step.startC === null || !(t1 > t0)) return 0;
  return integrate((t) => f(temperatureAt(step, t)), t0, t1, budgetPieces(step));
}

