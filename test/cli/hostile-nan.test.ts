import { existsSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterEach, describe, expect, it, vi } from 'vitest';
import * as solver from '../../packages/solver2d/src/index.ts';
import { edgewise, tempDir } from '../support/cli.ts';
import { TEST_DOPANT } from '../support/recipes.ts';

/**
 * Numerical guard: a field that stops being finite ends the run with SolverError naming the
 * step and the time, exit code 1, and no report. Two ways to force it: a recipe at the edges
 * of the schema that the stepper cannot hold finite, through the real binary; and a plan
 * corrupted by hand (one value made infinite), through the library and through the CLI's
 * own main() with planRecipe wrapped to corrupt what it returns.
 */
const corrupt = vi.hoisted(() => ({ apply: null as null | ((plan: import('../../packages/solver2d/src/index.ts').Plan) => void) }));
vi.mock('../../packages/solver2d/src/index.ts', async (importOriginal) => {
  const real = await importOriginal<typeof import('../../packages/solver2d/src/index.ts')>();
  return {
    ...real,
    planRecipe: (...args: Parameters<typeof real.planRecipe>) => {
      const plan = real.planRecipe(...args);
      corrupt.apply?.(plan);
      return plan;
    },
  };
});

afterEach(() => {
  corrupt.apply = null;
});

/** Film and drive-in, twice, of a species of the test's own (one Arrhenius term: intrinsic, as plan.ts models it). */
const RECIPE = {
  title: 'guard test: film and drive-in, twice (invented)',
  substrate: { dopant: 'P', concentrationCm3: 1e15 },
  crossSection: { widthUm: 12 },
  mask: { windows: [[4, 8]] },
  dopants: { Q: TEST_DOPANT },
  mesh: { surfaceSpacingUm: 0.1, edgeSpacingUm: 0.2, maxSpacingUm: 0.5 },
  numerics: { stepGrowth: 1.3 },
  steps: [
    { kind: 'film', dopant: 'Q', doseCm2: 1e14 },
    { kind: 'drive-in', temperatureC: 1000, minutes: 20 },
    { kind: 'film', dopant: 'Q', doseCm2: 1e13 },
    { kind: 'drive-in', temperatureC: 1050, minutes: 20 },
  ],
};

/** Time (s, within its step) at the end of the first time step of `step`, from a clean run's progress. */
function firstStepEnd(step: number): number {
  const plan = solver.planRecipe(solver.parseRecipe(RECIPE));
  let end: number | null = null;
  solver.simulate(plan, { onProgress: (p) => { if (p.step === step && end === null) end = p.seconds; } });
  if (end === null) throw new Error(`test set-up: steps[${step}] has no time steps`);
  return end;
}

/**
 * An infinite film dose: the film's cells become infinite, and the first diffusion step
 * makes Inf − Inf = NaN next to them. A dose plays no part in the time steps of an intrinsic
 * species (simulate.ts sizes them from ∫D dt and the mesh), so the clean run's schedule holds.
 */
const infiniteDose = (step: number) => (plan: solver.Plan) => { plan.steps[step].doseCm2 = Infinity; };

describe('a non-finite field stops the run, naming the step and the time', () => {
  it('library: an infinite film dose fails at the first time step of the first drive-in', () => {
    const expected = firstStepEnd(1);
    const plan = solver.planRecipe(solver.parseRecipe(RECIPE));
    infiniteDose(0)(plan);
    expect(() => solver.simulate(plan)).toThrow(solver.SolverError);
    // The guard runs after every time step, so the first step of steps[1] is where it stops.
    expect(() => solver.simulate(plan)).toThrow(`the Q field stopped being finite in steps[1] at ${expected.toPrecision(4)} s`);
  });

  it('library: a field that goes non-finite only in the last step is caught there, not before', () => {
    const expected = firstStepEnd(3);
    const plan = solver.planRecipe(solver.parseRecipe(RECIPE));
    infiniteDose(2)(plan);
    let last = -1;
    expect(() => solver.simulate(plan, { onProgress: (p) => { last = p.step; } })).toThrow(`the Q field stopped being finite in steps[3] at ${expected.toPrecision(4)} s`);
    // The first drive-in ran to its end (the second film has no time steps): the guard stops the run where it fails.
    expect(last).toBe(1);
  });

  it('CLI main(): exit code 1, one line naming the step and the time, no report.json', async () => {
    const { main } = await import('../../packages/cli/src/main.ts');
    const dir = tempDir('edgewise-guard-');
    const path = join(dir, 'film.json');
    writeFileSync(path, JSON.stringify(RECIPE));
    const out = join(dir, 'out');
    const expected = firstStepEnd(1);
    corrupt.apply = infiniteDose(0);
    const written: string[] = [];
    const spy = vi.spyOn(process.stderr, 'write').mockImplementation((chunk: string | Uint8Array) => { written.push(String(chunk)); return true; });
    let code: number;
    try {
      code = await main(['run', path, '--out', out, '--quiet', '--error-solves', '0']);
    } finally {
      spy.mockRestore();
    }
    expect(code).toBe(1);
    expect(written.join('')).toBe(`edgewise: solver failed: the Q field stopped being finite in steps[1] at ${expected.toPrecision(4)} s\n`);
    expect(existsSync(join(out, 'report.json'))).toBe(false);
    expect(existsSync(out) ? readdirSync(out) : []).toEqual([]);
  });

  it('real binary: a species at the edge of the schema (D0 1e6 cm²/s, Ea 5e-324 eV) at 1400 °C for 1e5 min', () => {
    // Every value is inside its allowed range (recipe.ts), yet the stepper cannot keep this
    // field finite. If the solver learns to, this case belongs with the bad-input table; the
    // hand-corrupted plans above keep the guard covered either way.
    const dir = tempDir('edgewise-guard-');
    const path = join(dir, 'edge.json');
    const seconds = 1e5 * 60;
    writeFileSync(path, JSON.stringify({
      title: 'schema edges (invented)',
      substrate: { dopant: 'P', concentrationCm3: 1e15 },
      crossSection: { widthUm: 24 },
      mask: { windows: [[8, 16]] },
      dopants: { Q: { type: 'acceptor', D0Cm2PerS: 1e6, EaEv: 5e-324 } },
      steps: [{ kind: 'predeposition', dopant: 'Q', surfaceConcentrationCm3: 1e22, temperatureC: 1400, minutes: 1e5 }],
    }));
    const out = join(dir, 'out');
    const r = edgewise(['run', path, '--out', out, '--quiet']);
    expect(r.code, r.stderr).toBe(1);
    const m = /^edgewise: solver failed: the Q field stopped being finite in steps\[0\] at ([\d.e+-]+) s\n$/.exec(r.stderr);
    expect(m, r.stderr).not.toBeNull();
    const t = Number(m![1]);
    // A time within the step: after it starts, no later than its end.
    expect(t).toBeGreaterThan(0);
    expect(t).toBeLessThanOrEqual(seconds);
    expect(r.stdout).toBe('');
    expect(existsSync(join(out, 'report.json'))).toBe(false);
  });
});
