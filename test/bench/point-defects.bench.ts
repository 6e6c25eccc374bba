/**
 * TED and OED cost (`npx tsx test/bench/point-defects.bench.ts`). Prints; asserts nothing.
 * On the same 160 × 160 mesh and step growth: ms per time step and whole-run time with each
 * model on and off, medians of five interleaved runs (this machine's speed jumps 2× second
 * to second). A TED step scales the species' budgets uniformly (the same sweep as without);
 * an OED step needs ν per node and solves every line with its own factors.
 */
import { parseRecipe, planRecipe, simulate } from '../../packages/solver2d/src/index.ts';

const IMPLANT = { kind: 'implant', dopant: 'B', doseCm2: 1e14, projectedRangeUm: 0.1, straggleUm: 0.035 };

function recipe(physics: Record<string, boolean>, temperatureC: number, ambient: string) {
  return {
    title: 'bench: boron implant anneal (invented)',
    substrate: { dopant: 'P', concentrationCm3: 1e16 },
    crossSection: { widthUm: 6, depthUm: 1.5 },
    mask: { windows: [[1.5, 4.5]] },
    mesh: { columns: 160, rows: 160 },
    numerics: { stepGrowth: 1.02 },
    physics,
    steps: [IMPLANT, { kind: 'anneal', temperatureC, minutes: 30, ambient }],
  };
}

const cases: [string, ReturnType<typeof recipe>][] = [
  ['800 °C 30 min, TED off', recipe({ ted: false }, 800, 'inert')],
  ['800 °C 30 min, TED on', recipe({}, 800, 'inert')],
  ['1000 °C 30 min inert, models off', recipe({ ted: false, oxidationEnhanced: false }, 1000, 'inert')],
  ['1000 °C 30 min steam, OED off', recipe({ ted: false, oxidationEnhanced: false }, 1000, 'steam')],
  ['1000 °C 30 min steam, OED on', recipe({ ted: false }, 1000, 'steam')],
];
const perStep: Record<string, number[]> = {};
const whole: Record<string, number[]> = {};
const steps: Record<string, number> = {};
for (let r = 0; r < 5; r++) {
  for (const [name, input] of cases) {
    const plan = planRecipe(parseRecipe(input));
    const t0 = performance.now();
    const sim = simulate(plan);
    const ms = performance.now() - t0;
    steps[name] = sim.stepRecords[1].timeSteps;
    (perStep[name] ??= []).push(ms / steps[name]);
    (whole[name] ??= []).push(ms);
  }
}
const median = (v: number[]) => [...v].sort((a, b) => a - b)[v.length >> 1];
for (const [name] of cases) {
  console.log(`${name.padEnd(36)} ${String(steps[name]).padStart(4)} time steps  ${median(perStep[name]).toFixed(2)} ms/step  ${median(whole[name]).toFixed(0)} ms whole`);
}
