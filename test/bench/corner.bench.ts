/**
 * 3D speed and memory figures (`node scripts/run-ts.mjs test/bench/corner.bench.ts`). Prints;
 * asserts nothing. Timings on a shared machine jump 2× from second to second: each figure is
 * the median of interleaved runs (3D and 2D alternating).
 * 1. ns per mesh point per full time step: the 3D step (Douglas–Gunn, three sweeps), sealed
 *    and held, against the 2D step (Peaceman–Rachford) on as many points.
 * 2. The default corner solve (examples/corner-square.json): wall time of the solve, of its
 *    two coarser solves for the error bars, and the process's peak resident memory, each in a
 *    fresh process; the state the solve keeps per mesh point.
 */
import { execFileSync } from 'node:child_process';
import { AdiStepper } from '../../packages/solver2d/src/adi.ts';
import { AdiStepper3d } from '../../packages/solver2d/src/adi3d.ts';
import { buildMask } from '../../packages/solver2d/src/mask.ts';
import { buildMesh, uniformAxis } from '../../packages/solver2d/src/mesh.ts';
import { buildMask3d, buildMesh3d } from '../../packages/solver2d/src/mesh3d.ts';

const child = process.argv[2];
if (child === 'solve') {
  // One default corner solve in this process: its time, the coarser solves' time, peak memory.
  const { analyze, coarseReports, parseRecipe, planRecipe, simulate } = await import('../../packages/solver2d/src/index.ts');
  const { readRecipeFile } = await import('../../packages/cli/src/read-recipe.ts');
  const t0 = performance.now();
  const plan = planRecipe(parseRecipe(await readRecipeFile('examples/corner-square.json')));
  const sim = simulate(plan);
  const analysis = analyze(sim);
  const t1 = performance.now();
  const rssSolve = process.resourceUsage().maxRSS;
  coarseReports(plan.recipe, { levels: 2 });
  const t2 = performance.now();
  const space = plan.space!;
  const points = space.mesh.nx * space.mesh.ny * space.mesh.nz;
  const steps = sim.stepRecords.reduce((n, r) => n + r.timeSteps, 0);
  const r = analysis.report.rectangles![0];
  console.log(JSON.stringify({ solveS: (t1 - t0) / 1000, errorS: (t2 - t1) / 1000, rssSolveMiB: rssSolve / 1024, rssMiB: process.resourceUsage().maxRSS / 1024,
    points, steps, nx: space.mesh.nx, ny: space.mesh.ny, nz: space.mesh.nz, edge: r.edgeReachUm.right, corner: r.cornerReachUm.topRight, xj: r.junctionDepthUm }));
  process.exit(0);
}

function median(v: number[]): number {
  const s = [...v].sort((a, b) => a - b);
  return s.length % 2 ? s[s.length >> 1] : 0.5 * (s[s.length / 2 - 1] + s[s.length / 2]);
}

function timed(f: () => void): number {
  const t0 = performance.now();
  f();
  return performance.now() - t0;
}

const STEPS = 20;
const ROUNDS = 7;
console.log(`Step cost, ns per mesh point per time step (median of ${ROUNDS} interleaved rounds of ${STEPS} steps, one core, shared machine)`);
for (const n of [48, 96, 128]) {
  const nz = n;
  const mesh3 = buildMesh3d(uniformAxis(n * 0.01, n), uniformAxis(n * 0.01, n), uniformAxis((nz - 1) * 0.01, nz - 1));
  const mask3 = buildMask3d(mesh3, [[0, 0, n * 0.005, n * 0.005]]);
  const s3 = new AdiStepper3d(mesh3, mask3);
  const c3 = new Float64Array(n * n * nz);
  const points3 = n * n * nz;
  // The 2D step on as many points: a square cross-section of the same count.
  const side = Math.round(Math.sqrt(points3));
  const mesh2 = buildMesh(uniformAxis(side * 0.01, side), uniformAxis((side - 1) * 0.01, side - 1));
  const s2 = new AdiStepper(mesh2, buildMask(mesh2, [[0, side * 0.005]]));
  const c2 = new Float64Array(side * side);
  s3.holdSurface(c3, 1e20);
  s2.holdSurface(c2, 1e20);
  const sealed3: number[] = [], held3: number[] = [], sealed2: number[] = [];
  for (let r = 0; r < ROUNDS; r++) {
    held3.push(timed(() => { for (let k = 0; k < STEPS; k++) { s3.holdSurface(c3, 1e20); s3.step(c3, 1e-4 * (1 + k / STEPS), 'douglas-gunn', true); } }));
    sealed3.push(timed(() => { for (let k = 0; k < STEPS; k++) s3.step(c3, 1e-4 * (1 + k / STEPS), 'douglas-gunn', false); }));
    sealed2.push(timed(() => { for (let k = 0; k < STEPS; k++) s2.step(c2, 1e-4 * (1 + k / STEPS), 'peaceman-rachford', false, 0); }));
  }
  const per = (ms: number[], points: number) => ((median(ms) * 1e6) / (STEPS * points)).toFixed(2);
  console.log(`  3D ${n} × ${n} × ${nz} (${(points3 / 1e6).toFixed(2)} M points): drive-in ${per(sealed3, points3)}, predeposition ${per(held3, points3)}` +
    `   2D ${side} × ${side}: drive-in ${per(sealed2, side * side)}`);
}

const runs = Number(process.env.CORNER_RUNS ?? 3);
console.log(`\nDefault corner solve: examples/corner-square.json, ${runs} fresh processes (median)`);
const results: Record<string, number>[] = [];
for (let r = 0; r < runs; r++) {
  const out = execFileSync(process.execPath, ['scripts/run-ts.mjs', 'test/bench/corner.bench.ts', 'solve'], { encoding: 'utf8' });
  results.push(JSON.parse(out.trim().split('\n').pop()!));
}
const m = (key: string) => median(results.map((x) => x[key]));
const first = results[0];
console.log(`  mesh ${first.nx} × ${first.ny} × ${first.nz} = ${(first.points / 1e6).toFixed(2)} M points (a quarter, two mirror planes), ${first.steps} time steps`);
console.log(`  solve + analysis ${m('solveS').toFixed(2)} s (${((m('solveS') * 1e9) / (first.points * first.steps)).toFixed(1)} ns per point-step, all included); ` +
  `two coarser solves for the error bars ${m('errorS').toFixed(2)} s`);
console.log(`  peak resident memory ${m('rssSolveMiB').toFixed(0)} MiB after the solve and analysis, ${m('rssMiB').toFixed(0)} MiB with the error solves ` +
  `(${((m('rssSolveMiB') * 2 ** 20) / first.points).toFixed(0)} bytes per point of the whole process)`);
console.log(`  xj ${first.xj} µm, edge reach ${first.edge} µm, corner reach ${first.corner} µm`);
