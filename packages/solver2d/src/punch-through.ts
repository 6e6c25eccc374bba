import { recovery } from './depletion.ts';
import { abruptWidthUm, electrostaticGrid, finest, nearestIndex, regionsProblem, signComponents } from './electrical.ts';
import { PoissonSolver } from './electrostatics.ts';
import { coarsenedRecipe } from './error-estimate.ts';
import { buildField } from './field.ts';
import type { Mesh } from './mesh.ts';
import { planRecipe, type PlanLimits } from './plan.ts';
import type { Recipe } from './recipe.ts';
import { labelRegions } from './region.ts';
import { simulate } from './simulate.ts';
import { bisectStripe, pairRecipe, stripeError, StripeSearchError } from './stripe-search.ts';

/**
 * Punch-through spacing: the narrowest masked stripe between two neighbouring regions of one
 * type whose depletion regions stay apart when both are held at the same reverse bias against
 * the region below them (the substrate). Below it no neutral silicon is left between them and
 * the barrier that isolates one from the other is gone (common practice: the electrical
 * spacing rule of two diffusions, wider than the metallurgical one by about the two depletion
 * widths at that bias).
 *
 * Each trial stripe is the pair recipe of `edgewise spacing` (stripe-search.ts) diffused anew;
 * on its final doping both regions are biased together (electrical.ts's Poisson problem with
 * both regions in it), and the two are apart when no path of depleted or biased nodes joins
 * them (neighbours along x or z; depleted: majority carriers below half the doping, as for the
 * depletion edges of depletion.ts). The bisection is stripe-search.ts's.
 */

export interface PunchThroughSolve {
  stripeUm: number;
  /** the depletion regions stay apart */
  meets: boolean;
  /** the two regions are one already (metallurgically merged) */
  merged: boolean;
  /** neutral silicon at the surface between the two depletion edges, µm; 0 once they touch */
  neutralGapUm: number;
}

export class PunchThroughError extends StripeSearchError {
  constructor(message: string) {
    super(message);
    this.name = 'PunchThroughError';
  }
}

/**
 * Whether the depletion regions of the regions under `left` and `right` (two windows [x0, x1]
 * of the mesh) stay apart at `biasV`, on the doping `net` of the mesh. `minSpacingUm` thins the
 * mesh for the electrostatics as electrical.ts does (default 2.5× its finest spacing).
 */
export function pairDepletion(mesh: Mesh, net: Float64Array, left: readonly [number, number], right: readonly [number, number], biasV: number, minSpacingUm?: number): Omit<PunchThroughSolve, 'stripeUm'> {
  const h = minSpacingUm ?? 2.5 * Math.min(finest(mesh.x), finest(mesh.z));
  const bottomN = Math.max(Math.abs(net[(mesh.nz - 1) * mesh.nx]), 1e12);
  const reach = abruptWidthUm(bottomN, biasV);
  const grid = electrostaticGrid(mesh, net, h, mesh.depthUm + 1.2 * reach, reach / 30);
  const { nx } = grid.mesh;
  const { labels, bottom } = signComponents(grid.net, nx, grid.mesh.nz);
  const ia = nearestIndex(grid.mesh.x, 0.5 * (left[0] + left[1]));
  const ib = nearestIndex(grid.mesh.x, 0.5 * (right[0] + right[1]));
  const la = labels[ia];
  const lb = labels[ib];
  for (const [label, k, w] of [[la, ia, left], [lb, ib, right]] as const) {
    if (bottom[label] === 1 || grid.net[k] === 0) throw new PunchThroughError(`the window [${w[0]}, ${w[1]}] µm has no region of its own to bias (its centre is of the substrate's type)`);
  }
  if (Math.sign(grid.net[ia]) !== Math.sign(grid.net[ib])) throw new PunchThroughError('the two windows hold regions of opposite types: punch-through is between two regions of one type');
  if (la === lb) return { meets: false, merged: true, neutralGapUm: 0 };
  const solver = new PoissonSolver(regionsProblem(grid, labels, [la, lb], [left, right]));
  if (!solver.solve(0).converged || !solver.continueTo(biasV).converged) {
    // Not the recipe's fault: an internal failure, reported as such.
    throw new Error(`electrostatics of the pair with a ${(right[0] - left[1]).toPrecision(4)} µm stripe did not converge at ${biasV} V`);
  }
  const joined = depletionJoins(solver, ia, ib);
  return { meets: !joined, merged: false, neutralGapUm: joined ? 0 : surfaceNeutralGapUm(solver, ia, ib) };
}

/** Whether a path of biased or depleted nodes joins the nodes a and b. */
function depletionJoins(solver: PoissonSolver, a: number, b: number): boolean {
  const { nx, nz } = solver.problem.mesh;
  const { biased } = solver.problem;
  const dark = new Uint8Array(nx * nz);
  for (let k = 0; k < dark.length; k++) dark[k] = biased[k] === 1 || recovery(solver, k) < 0 ? 1 : 0;
  const { labels } = labelRegions(dark, nx, nz);
  return labels[a] === labels[b];
}

/**
 * Neutral silicon on the surface row between the surface nodes a < b, µm: from the depletion
 * edge right of a's region to the one left of b's, each where r crosses 0 (linear between nodes).
 */
function surfaceNeutralGapUm(solver: PoissonSolver, a: number, b: number): number {
  const { x } = solver.problem.mesh;
  const edge = (from: number, to: number, step: 1 | -1): number | null => {
    let prev = -0.5;
    let prevX = x[from];
    for (let i = from; i !== to; i += step) {
      const r = solver.problem.biased[i] === 1 ? -0.5 : recovery(solver, i);
      if (r >= 0) return prevX + (x[i] - prevX) * (-prev / (r - prev));
      prev = r;
      prevX = x[i];
    }
    return null;
  };
  const xa = edge(a, b, 1);
  const xb = edge(b, a, -1);
  return xa === null || xb === null ? 0 : Math.max(0, xb - xa);
}

export interface PunchThroughOptions {
  biasV: number;
  toleranceUm: number;
  limits?: PlanLimits;
  /** start the bracket around this stripe (µm), e.g. the answer on a finer mesh */
  guessUm?: number;
  onSolve?: (solve: PunchThroughSolve, index: number) => void;
  shouldStop?: () => boolean;
}

export interface PunchThroughSearch {
  biasV: number;
  toleranceUm: number;
  /** the narrowest stripe found whose depletion regions stay apart, µm */
  stripeUm: number;
  /** widest stripe seen that punches through and narrowest that does not, µm */
  bracketUm: [number, number];
  solves: PunchThroughSolve[];
}

/** The diffusion of the pair recipe, without the electrical rules of the recipe's own windows. */
function pairDoping(recipe: Recipe, stripeUm: number, limits?: PlanLimits, shouldStop?: () => boolean) {
  const { electrical: _electrical, ...rest } = pairRecipe(recipe, stripeUm);
  void _electrical;
  const sim = simulate(planRecipe(rest, limits), { shouldStop });
  return { sim, field: buildField(sim) };
}

export function searchPunchThrough(recipe: Recipe, options: PunchThroughOptions): PunchThroughSearch {
  if (recipe.mask.rectangles) throw new PunchThroughError('punch-through spacing is searched on a 2D cross-section (mask.windows)');
  const { biasV, toleranceUm } = options;
  const solves: PunchThroughSolve[] = [];
  const run = (stripeUm: number): PunchThroughSolve => {
    const { sim, field } = pairDoping(recipe, stripeUm, options.limits, options.shouldStop);
    const [left, right] = sim.plan.mask.windows;
    const solve = { stripeUm, ...pairDepletion(sim.plan.mesh, field.layers.net.data, left, right, biasV) };
    solves.push(solve);
    options.onSolve?.(solve, solves.length - 1);
    return solve;
  };
  // Without a guess: the junctions reach about plan.reachUm sideways from each mask edge, and
  // each depletion region about the one-sided abrupt width on the substrate's doping beyond that.
  const guess = options.guessUm
    ?? 2 * planRecipe(recipe, options.limits).reachUm + 2 * abruptWidthUm(recipe.substrate.concentrationCm3, biasV);
  const strideUm = options.guessUm !== undefined ? Math.max(4 * toleranceUm, 0.05 * guess) : 0.5 * guess;
  const { lo, hi } = bisectStripe(run, {
    toleranceUm, guessUm: guess, strideUm,
    failure: (widest) => `no stripe up to ${widest.toPrecision(4)} µm keeps the two depletion regions apart at ${biasV} V`,
  });
  return { biasV, toleranceUm, stripeUm: hi.stripeUm, bracketUm: [lo, hi.stripeUm], solves };
}

export interface PunchThroughSearchWithError extends PunchThroughSearch {
  /** numerical error of stripeUm, µm, as for the metallurgical stripe (stripe-search.ts); null with no coarser search */
  stripeErrorUm: number | null;
  /** the answers on the meshes h, 2h (and 4h) */
  stripesByMeshUm: number[];
}

/** The search on the default mesh and on meshes 2 (and 4) times coarser, each started around the previous answer. */
export function searchPunchThroughWithError(recipe: Recipe, options: PunchThroughOptions & { levels?: 0 | 1 | 2; onLevel?: (level: number) => void }): PunchThroughSearchWithError {
  const fine = searchPunchThrough(recipe, options);
  const answers = [fine.stripeUm];
  for (let level = 1; level <= (options.levels ?? 1); level++) {
    options.onLevel?.(level);
    const coarse = searchPunchThrough(coarsenedRecipe(recipe, level), { ...options, guessUm: answers[answers.length - 1] });
    answers.push(coarse.stripeUm);
  }
  return { ...fine, stripeErrorUm: stripeError(answers, fine.bracketUm), stripesByMeshUm: answers };
}

/** The bias of the punch-through search: `electrical.spacingBiasV`, else the largest of `electrical.biasV`. */
export function spacingBiasOf(recipe: Recipe): number | null {
  const e = recipe.electrical;
  if (!e) return null;
  return e.spacingBiasV ?? Math.max(...e.biasV);
}
