import erfc from '@stdlib/math-base-special-erfc';
import { parseRecipe, planRecipe, simulate, analyze } from '../packages/solver2d/src/index.ts';
const recipe = parseRecipe({
  substrate: { dopant: 'P', concentrationCm3: 1e16 },
  crossSection: { widthUm: 40 },
  mask: { windows: [[10, 30]] },
  steps: [{ kind: 'predeposition', dopant: 'B', surfaceConcentrationCm3: 1e20, temperatureC: 1100, minutes: 60 }],
  mesh: { refine: Number(process.argv[2] ?? 1) }, numerics: { stepGrowth: Number(process.argv[3] ?? 1.2), startupSteps: Number(process.argv[4] ?? 3) },
});
const t0 = performance.now();
const plan = planRecipe(recipe);
const t1 = performance.now();
const sim = simulate(plan);
const t2 = performance.now();
const { report } = analyze(sim);
const t3 = performance.now();
const Dt = plan.thermalBudgetUm2.B;
const xjExact = 2 * Math.sqrt(Dt) * 2.751064; // erfcinv(1e-4)
console.log({ nx: plan.mesh.nx, nz: plan.mesh.nz, steps: sim.stepRecords, plan: t1 - t0, sim: t2 - t1, an: t3 - t2 });
console.log(report.windows[0], 'xj exact', xjExact);
console.log('dose', report.doseCm2, 'exact', 2 * 1e20 * Math.sqrt(Dt / Math.PI) * 1e-4, sim.ledger);
// centre profile error
const i = plan.mesh.x.findIndex((x) => x > 20);
let maxErr = 0;
for (let j = 0; j < plan.mesh.nz; j++) {
  const z = plan.mesh.z[j];
  const ex = 1e20 * erfc(z / (2 * Math.sqrt(Dt)));
  const c = sim.concentration.B[j * plan.mesh.nx + i];
  if (ex > 1e16) maxErr = Math.max(maxErr, Math.abs(c - ex) / ex);
}
let minv = Infinity; for (const v of sim.concentration.B) minv = Math.min(minv, v);
console.log('max rel err (C>NB)', maxErr, 'min', minv);
