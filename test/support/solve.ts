import { analyze, parseRecipe, planRecipe, simulate } from '../../packages/solver2d/src/index.ts';

/** parse → plan → simulate → analyze, keeping every stage for the checks. */
export function solve(recipe: unknown) {
  const plan = planRecipe(parseRecipe(recipe));
  const sim = simulate(plan);
  const analysis = analyze(sim);
  return { plan, sim, ...analysis };
}

/** The solution on the column halfway between the two cells either side of x. */
export function columnAtX(mesh: { x: Float64Array; nx: number; nz: number }, c: Float64Array, x: number): Float64Array {
  let i = 0;
  while (i + 2 < mesh.nx && mesh.x[i + 1] < x) i++;
  const t = (x - mesh.x[i]) / (mesh.x[i + 1] - mesh.x[i]);
  const out = new Float64Array(mesh.nz);
  for (let j = 0; j < mesh.nz; j++) out[j] = (1 - t) * c[j * mesh.nx + i] + t * c[j * mesh.nx + i + 1];
  return out;
}

export function minimum(values: Float64Array): number {
  let m = Infinity;
  for (const v of values) m = Math.min(m, v);
  return m;
}
