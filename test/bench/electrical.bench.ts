/**
 * Electrostatics speed: Poisson solve time per bias point and per grid size, and a breakdown
 * search, on the boron base of examples/boron-base.json (default diffusion mesh 400 × 122).
 * Run: npx tsx test/bench/electrical.bench.ts [rounds]. Prints medians of interleaved rounds,
 * wall and CPU time (the machine may be shared: CPU time moves less), and the iteration
 * counts, which do not depend on the load: continuation steps and Newton iterations per bias
 * point, conjugate-gradient iterations per Newton iteration, and per breakdown search.
 * A bias point is what electrical.ts does at each bias: continuation from the last bias, then
 * the tangent the capacitance is read from.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { FieldLines, searchBreakdown } from '../../packages/solver2d/src/breakdown.ts';
import { electricalResults } from '../../packages/solver2d/src/electrical.ts';
import { PoissonSolver } from '../../packages/solver2d/src/electrostatics.ts';
import { runRecipe } from '../../packages/solver2d/src/index.ts';
import { VAN_OVERSTRAETEN_DE_MAN } from '../../packages/solver2d/src/ionisation.ts';

const rounds = Number(process.argv[2] ?? 3);
const recipe = JSON.parse(readFileSync(join(import.meta.dirname, '..', '..', 'examples', 'boron-base.json'), 'utf8'));
const analysis = runRecipe(recipe);
const mesh = analysis.field.mesh;
const net = analysis.field.layers.net.data;
const finest = Math.min(analysis.report.mesh.finestXUm, analysis.report.mesh.finestZUm);
const median = (v: number[]) => [...v].sort((a, b) => a - b)[Math.floor(v.length / 2)];

function timed<T>(f: () => T): { value: T; wall: number; cpu: number } {
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  const value = f();
  const c = process.cpuUsage(c0);
  return { value, wall: (performance.now() - t0) / 1000, cpu: (c.user + c.system) / 1e6 };
}

const factors = [2.5, 5, 10];
interface Figures {
  perBias: number[]; perBiasCpu: number[]; search: number[]; searchCpu: number[]; nodes: string;
  steps: number[]; newton: number[]; cgPerNewton: number[]; tangentCg: number[];
  searchSolves: number[]; searchNewton: number[]; searchCg: number[]; breakdownV: number[];
}
const results = new Map<number, Figures>();
for (let round = 0; round < rounds; round++) {
  for (const f of factors) {
    // The grid electrical.ts builds, through its own entry point with no bias and no search: then solve by hand.
    const grid = electricalResults(mesh, net, recipe.mask.windows, { biasV: [], minSpacingUm: f * finest, skipBreakdown: true, keepProblems: true });
    const problem = grid.problems![0]!;
    const solver = new PoissonSolver(problem);
    solver.solve(0);
    const entry = results.get(f) ?? {
      perBias: [], perBiasCpu: [], search: [], searchCpu: [], nodes: `${grid.columns} × ${grid.rows}`,
      steps: [], newton: [], cgPerNewton: [], tangentCg: [], searchSolves: [], searchNewton: [], searchCg: [], breakdownV: [],
    };
    // Bias points 5 V apart up to 40 V, each by continuation from the one before.
    for (let v = 5; v <= 40; v += 5) {
      const t = timed(() => {
        const out = solver.continueTo(v);
        return { out, tangent: solver.tangent(), charge: solver.regionCharge() };
      });
      entry.perBias.push(t.wall);
      entry.perBiasCpu.push(t.cpu);
      entry.steps.push(t.value.out.steps);
      entry.newton.push(t.value.out.iterations);
      entry.cgPerNewton.push(t.value.out.linearIterations / t.value.out.iterations);
      entry.tangentCg.push(t.value.tangent);
    }
    const fresh = new PoissonSolver(problem);
    fresh.solve(0);
    const s = timed(() => searchBreakdown(fresh, new FieldLines(problem.mesh), VAN_OVERSTRAETEN_DE_MAN, 85));
    entry.search.push(s.wall);
    entry.searchCpu.push(s.cpu);
    entry.searchSolves.push(s.value.solves);
    entry.searchNewton.push(s.value.iterations);
    entry.searchCg.push(s.value.linearIterations);
    entry.breakdownV.push(s.value.breakdownV ?? Number.NaN);
    results.set(f, entry);
  }
}
console.log(`boron base, diffusion mesh ${mesh.nx} × ${mesh.nz}, finest ${finest} µm; ${rounds} interleaved rounds, medians`);
for (const [f, e] of results) {
  console.log(`grid ${e.nodes} (smallest spacing ${(f * finest).toFixed(4)} µm):\n` +
    `  bias point ${median(e.perBias).toFixed(3)} s wall, ${median(e.perBiasCpu).toFixed(3)} s CPU: ${median(e.steps)} continuation step(s), ` +
    `${median(e.newton)} Newton iterations (${e.newton.slice(0, 8).join(' ')} at 5…40 V), ${median(e.cgPerNewton).toFixed(1)} CG iterations per Newton, ${median(e.tangentCg)} for the tangent\n` +
    `  breakdown search from 0 V ${median(e.search).toFixed(2)} s wall, ${median(e.searchCpu).toFixed(2)} s CPU: ${median(e.searchSolves)} biases solved, ` +
    `${median(e.searchNewton)} Newton and ${median(e.searchCg)} CG iterations; breakdown ${median(e.breakdownV).toFixed(3)} V`);
}
