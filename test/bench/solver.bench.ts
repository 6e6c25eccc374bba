/**
 * Solver speed and accuracy figures (`pnpm bench`). Prints; asserts nothing.
 * 1. ns per mesh point per full ADI step (both sweeps), at three mesh sizes.
 * 2. The reference case at three mesh refinements: wall time, xj and lateral encroachment
 *    against the mesh- and step-converged values.
 * 3. Nonlinear (charged-defect) against linear (intrinsic) time on the same mesh, for the
 *    reference case and the bundled examples.
 * 4. The high-concentration models (Fair–Tsai kink and tail, active/inactive split) on and off,
 *    for each example and two cases of their own, against a linear step on the same mesh size.
 * 5. The whole CLI process on the reference case.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { AdiStepper } from '../../packages/solver2d/src/adi.ts';
import { buildMask } from '../../packages/solver2d/src/mask.ts';
import { buildMesh, uniformAxis } from '../../packages/solver2d/src/mesh.ts';
import { analyze, parseRecipe, planRecipe, simulate } from '../../packages/solver2d/src/index.ts';
import { readRecipeFile } from '../../packages/cli/src/read-recipe.ts';
import { modelPlans, referenceRecipe } from './reference-case.ts';

function best<T>(repeats: number, f: () => T): { ms: number; value: T } {
  let ms = Infinity;
  let value!: T;
  for (let r = 0; r < repeats; r++) {
    const t0 = performance.now();
    value = f();
    ms = Math.min(ms, performance.now() - t0);
  }
  return { ms, value };
}

console.log('ADI step cost (min of 5 runs of 100 full steps, one core)');
for (const [nx, nz] of [[200, 100], [400, 200], [800, 400]]) {
  const mesh = buildMesh(uniformAxis(nx * 0.01, nx), uniformAxis((nz - 1) * 0.01, nz - 1));
  const mask = buildMask(mesh, [[nx * 0.004, nx * 0.006]]);
  const stepper = new AdiStepper(mesh, mask);
  const c = new Float64Array(nx * nz);
  stepper.holdSurface(c, 1e20);
  for (let k = 0; k < 30; k++) stepper.step(c, 1e-4, 'peaceman-rachford', true, 1e20);
  const held = best(5, () => { for (let k = 0; k < 100; k++) stepper.step(c, 1e-4 * (1 + k / 100), 'peaceman-rachford', true, 1e20); });
  const sealed = best(5, () => { for (let k = 0; k < 100; k++) stepper.step(c, 1e-4 * (1 + k / 100), 'peaceman-rachford', false, 0); });
  const per = (ms: number) => ((ms * 1e6) / (100 * nx * nz)).toFixed(2);
  console.log(`  ${String(nx).padStart(4)} × ${String(nz).padEnd(4)} predeposition ${per(held.ms)} ns/point/step   drive-in ${per(sealed.ms)} ns/point/step`);
}

function solve(mesh: Record<string, number>, numerics: Record<string, number> = {}) {
  const plan = planRecipe(parseRecipe(referenceRecipe(mesh, numerics)));
  const sim = simulate(plan);
  const { report } = analyze(sim);
  const w = report.windows[0];
  return { xj: w.junctionDepthUm!, lateral: w.lateralLeftUm!, nx: plan.mesh.nx, nz: plan.mesh.nz, steps: sim.stepRecords[0].timeSteps };
}

console.log('\nReference case: one window, constant source, Cs/NB = 1e4');
const converged = solve({ refine: 4 }, { stepGrowth: 1.02 });
const check = solve({ refine: 3 }, { stepGrowth: 1.03 });
console.log(`  converged (refine 4, growth 1.02): xj ${converged.xj.toFixed(5)} µm, lateral ${converged.lateral.toFixed(5)} µm` +
  ` (refine 3, growth 1.03 differs by ${(((check.xj - converged.xj) / converged.xj) * 100).toFixed(3)} % and ${(((check.lateral - converged.lateral) / converged.lateral) * 100).toFixed(3)} %)`);
for (const refine of [0.5, 1, 2]) {
  const run = best(5, () => solve({ refine }));
  const r = run.value;
  const exj = ((r.xj - converged.xj) / converged.xj) * 100;
  const elat = ((r.lateral - converged.lateral) / converged.lateral) * 100;
  console.log(`  refine ${String(refine).padEnd(3)} mesh ${r.nx} × ${r.nz}, ${r.steps} steps: ${run.ms.toFixed(1).padStart(6)} ms` +
    `   xj ${r.xj.toFixed(4)} µm (${exj >= 0 ? '+' : ''}${exj.toFixed(2)} %)   lateral ${r.lateral.toFixed(4)} µm (${elat >= 0 ? '+' : ''}${elat.toFixed(2)} %)` +
    (refine === 1 ? '   ← default mesh' : ''));
}

console.log('\nNonlinear (charged-defect model) against linear (intrinsic), each recipe on the mesh planned for its');
console.log('nonlinear profile (the deeper one); CPU time, best of 8 runs taken in turn, and the median of the 8 pairs\' ratios');
{
  const cases: [string, unknown][] = [
    ['reference, boron at p/ni ≈ 8', referenceRecipe({}, {}, 'charged-defect')],
    ...await Promise.all(['base-resistor.json', 'boron-base.json', 'arsenic-source-drain.json', 'phosphorus-well.yaml']
      .map(async (f): Promise<[string, unknown]> => [`examples/${f}`, await readRecipeFile(join(process.cwd(), 'examples', f))])),
  ];
  const cpuMs = (f: () => unknown) => {
    const t0 = process.cpuUsage();
    f();
    const t = process.cpuUsage(t0);
    return (t.user + t.system) / 1000;
  };
  const equalReach: string[] = [];
  for (const [name, recipe] of cases) {
    // One model for every species: the recipe's own per-species choices are set aside.
    const { nonlinear: nonlinearPlan, linear: linearPlan } = modelPlans(recipe);
    const { plan: reachPlan, factor } = equalReachPlan(recipe, nonlinearPlan);
    let lin = Infinity;
    let non = Infinity;
    let far = Infinity;
    // Each pair's own ratio too: the machine's speed drifts from second to second, and the two
    // bests can come from different moments; the median of the pairs is the steadier figure.
    const pairs: number[] = [];
    const farPairs: number[] = [];
    for (let r = 0; r < 8; r++) {
      const l = cpuMs(() => simulate(linearPlan));
      const n = cpuMs(() => simulate(nonlinearPlan));
      const f = cpuMs(() => simulate(reachPlan));
      lin = Math.min(lin, l);
      non = Math.min(non, n);
      far = Math.min(far, f);
      pairs.push(n / l);
      farPairs.push(n / f);
    }
    const median = medianOf(pairs);
    const points = nonlinearPlan.mesh.nx * nonlinearPlan.mesh.nz;
    const ls = stepsOf(linearPlan);
    const ns = stepsOf(nonlinearPlan);
    const fs = stepsOf(reachPlan);
    console.log(`  ${name.padEnd(36)} ${nonlinearPlan.mesh.nx} × ${nonlinearPlan.mesh.nz}: linear ${lin.toFixed(1)} ms (${ls} steps), ` +
      `nonlinear ${non.toFixed(1)} ms (${ns} steps): ${(non / lin).toFixed(2)}× the time (median of pairs ${median.toFixed(2)}×), ` +
      `${((non / ns) / (lin / ls)).toFixed(2)}× a step` +
      `  [${((non * 1e6) / (ns * points)).toFixed(1)} vs ${((lin * 1e6) / (ls * points)).toFixed(1)} ns/point/step]`);
    equalReach.push(`  ${name.padEnd(36)} durations × ${factor.toPrecision(3).padEnd(5)}: linear ${far.toFixed(1)} ms (${fs} steps), ` +
      `nonlinear ${(non / far).toFixed(2)}× the time (median of pairs ${medianOf(farPairs).toFixed(2)}×)`);
  }
  console.log('\nThe same against a linear case of equal reach: intrinsic, on the same mesh, with every step\'s duration');
  console.log('stretched by the factor that brings its junction depth at the first window to the nonlinear one (0.1 %)');
  for (const line of equalReach) console.log(line);
}


console.log('\nHigh-concentration models on (defaults) and off (physics switches false), and linear (intrinsic, all off),');
console.log('each on the mesh size planned with the models on; CPU time, best of 5 runs taken in turn');
{
  const OFF = { phosphorusKink: false, clustering: false, ted: false, oxidationEnhanced: false };
  const cases: [string, Record<string, unknown>][] = [
    ...await Promise.all(['base-resistor.json', 'boron-base.json', 'arsenic-source-drain.json', 'phosphorus-well.yaml']
      .map(async (f): Promise<[string, Record<string, unknown>]> => [`examples/${f}`, await readRecipeFile(join(process.cwd(), 'examples', f)) as Record<string, unknown>])),
    ['emitter: P 3e20 cm^-3, 850 °C 20 min', {
      substrate: { dopant: 'B', concentrationCm3: 1e16 }, crossSection: { widthUm: 5 }, mask: { windows: [[0, 2]] },
      steps: [{ kind: 'predeposition', dopant: 'P', surfaceConcentrationCm3: 3e20, temperatureC: 850, minutes: 20 }],
    }],
    ['As 5e15 cm^-2 implant, 1000 °C 30 min', {
      substrate: { dopant: 'B', concentrationCm3: 1e16 }, crossSection: { widthUm: 2 }, mask: { windows: [[0, 1]] },
      steps: [{ kind: 'implant', dopant: 'As', doseCm2: 5e15, projectedRangeUm: 0.05, straggleUm: 0.02 }, { kind: 'anneal', temperatureC: 1000, minutes: 30 }],
    }],
  ];
  const cpu = (f: () => unknown) => {
    const t0 = process.cpuUsage();
    f();
    const t = process.cpuUsage(t0);
    return (t.user + t.system) / 1000;
  };
  for (const [name, recipe] of cases) {
    const on = planRecipe(parseRecipe(recipe));
    const same = { ...recipe, crossSection: { ...(recipe.crossSection as object), depthUm: on.mesh.depthUm }, mesh: { columns: on.mesh.nx, rows: on.mesh.nz } };
    const off = planRecipe(parseRecipe({ ...same, physics: OFF }));
    const linear = planRecipe(parseRecipe({ ...same, physics: OFF, diffusion: { model: 'intrinsic' } }));
    const plans = [on, off, linear];
    const ms = [Infinity, Infinity, Infinity];
    const steps = plans.map(stepsOf);
    for (let r = 0; r < 5; r++) plans.forEach((p, k) => { ms[k] = Math.min(ms[k], cpu(() => simulate(p))); });
    const points = on.mesh.nx * on.mesh.nz;
    const perStep = ms.map((m, k) => (m * 1e6) / (steps[k] * points));
    const used = on.models.filter((m) => m.model !== 'charged-defect').map((m) => `${m.model} ${m.species.join('+')}`).join(', ') || 'none';
    console.log(`  ${name.padEnd(38)} ${on.mesh.nx} × ${on.mesh.nz} [${used}]: on ${ms[0].toFixed(0)} ms (${steps[0]} steps), ` +
      `off ${ms[1].toFixed(0)} ms (${steps[1]}), linear ${ms[2].toFixed(0)} ms (${steps[2]}); per step ${perStep[0].toFixed(1)} / ` +
      `${perStep[1].toFixed(1)} / ${perStep[2].toFixed(1)} ns/point: on = ${(perStep[0] / perStep[1]).toFixed(2)}× off, ${(perStep[0] / perStep[2]).toFixed(2)}× linear`);
  }
}

function medianOf(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const h = sorted.length >> 1;
  return sorted.length % 2 === 1 ? sorted[h] : 0.5 * (sorted[h - 1] + sorted[h]);
}

function stepsOf(plan: Parameters<typeof simulate>[0]): number {
  return simulate(plan).stepRecords.reduce((n, s) => n + s.timeSteps, 0);
}

function firstDepth(plan: Parameters<typeof simulate>[0]): number {
  const xj = analyze(simulate(plan)).report.windows[0].junctionDepthUm;
  if (xj === null || xj === undefined) throw new Error("no junction at the first window");
  return xj;
}

/**
 * The recipe with the intrinsic model and every step's minutes × k, on the nonlinear plan's mesh
 * and mask, for the k (bisected in log k) at which its first junction depth is the nonlinear one.
 * At a fixed temperature or along a ramp, stretching time scales every step's ∫D dt by k.
 */
function equalReachPlan(recipe: unknown, nonlinear: Parameters<typeof simulate>[0]) {
  const target = firstDepth(nonlinear);
  const base = recipe as { steps: Record<string, unknown>[]; diffusion?: object };
  const planFor = (k: number) => {
    const steps = base.steps.map((st) => (typeof st.minutes === 'number' ? { ...st, minutes: st.minutes * k } : st));
    const parsed = parseRecipe({ ...base, steps, diffusion: { ...(base.diffusion ?? {}), model: 'intrinsic', species: undefined } });
    return { ...planRecipe(parsed), mesh: nonlinear.mesh, mask: nonlinear.mask };
  };
  let low = 1;
  let high = 1;
  while (firstDepth(planFor(low)) > target) low /= 2;
  while (firstDepth(planFor(high)) < target) high *= 2;
  let k = Math.sqrt(low * high);
  for (let r = 0; r < 40 && high / low > 1.0005; r++) {
    k = Math.sqrt(low * high);
    const xj = firstDepth(planFor(k));
    if (Math.abs(xj - target) <= 1e-3 * target) break;
    if (xj < target) low = k;
    else high = k;
  }
  return { plan: planFor(k), factor: k };
}

const dir = mkdtempSync(join(tmpdir(), 'edgewise-bench-'));
const recipePath = join(dir, 'reference.json');
writeFileSync(recipePath, JSON.stringify(referenceRecipe()));
const cli = join(process.cwd(), 'packages', 'cli', 'bin', 'edgewise.mjs');
execFileSync(process.execPath, [cli, 'run', recipePath, '--out', join(dir, 'out'), '--quiet']);
for (const [label, extra] of [['with error bars (two coarser solves)', []], ['without error bars (--error-solves 0)', ['--error-solves', '0']]] as const) {
  const whole = best(5, () => execFileSync(process.execPath, [cli, 'run', recipePath, '--out', join(dir, 'out'), '--quiet', ...extra]));
  console.log(`${label === 'with error bars (two coarser solves)' ? '\n' : ''}Whole CLI process on the reference case, ${label}: ${whole.ms.toFixed(0)} ms (min of 5)`);
}
