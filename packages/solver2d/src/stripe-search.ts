import { analyze } from './analyze.ts';
import { richardsonError } from './error-bars.ts';
import { coarsenedRecipe } from './error-estimate.ts';
import { windowOrder } from './mask.ts';
import { windowsOf } from './recipe-checks.ts';
import { planRecipe, type PlanLimits } from './plan.ts';
import type { Recipe } from './recipe.ts';
import { simulate } from './simulate.ts';
import type { PairSpacing } from './spacing.ts';
import { pairRecipe3d, pairSpacing3d } from './spacing3d.ts';

/**
 * The narrowest masked stripe between two windows that keeps their junctions at least a
 * given distance apart, by bisection on the stripe width.
 *
 * The pair is the recipe's first two windows (or its one window twice), with their widths and
 * the distance from each to its side wall kept, so the cross-section grows with the stripe.
 * A stripe meets the rule when the two diffused regions have not merged and the closest
 * approach of their junctions is at least the gap asked for. The gap rises with the stripe,
 * so the narrowest stripe lies between one that fails and one that meets, and bisection
 * halves that bracket until it is no wider than the tolerance; the answer is its upper end.
 */
export interface StripeSolve {
  stripeUm: number;
  spacing: PairSpacing;
  meets: boolean;
}

export interface StripeSearch {
  gapUm: number;
  toleranceUm: number;
  /** the narrowest stripe found that meets the gap, µm (upper end of the final bracket) */
  stripeUm: number;
  /** widest stripe seen that fails and narrowest that meets, µm */
  bracketUm: [number, number];
  /** the spacing at the answer */
  spacing: PairSpacing;
  solves: StripeSolve[];
  /** the pair recipe at the answer */
  recipe: Recipe;
}

interface StripeSearchOptions {
  gapUm: number;
  toleranceUm: number;
  limits?: PlanLimits;
  /** start the bracket around this stripe (µm), e.g. the answer on a finer mesh */
  guessUm?: number;
  onSolve?: (solve: StripeSolve, index: number) => void;
  shouldStop?: () => boolean;
}

/** Most solves spent widening the bracket before giving up. */
const MAX_WIDENINGS = 12;

/** The two-window recipe with a stripe of `stripeUm` between the windows (3D: two rectangles that far apart, spacing3d.ts). */
export function pairRecipe(recipe: Recipe, stripeUm: number): Recipe {
  if (recipe.mask.rectangles) return pairRecipe3d(recipe, stripeUm);
  const given = windowsOf(recipe, 'for a search over the stripe between two windows');
  const sorted = windowOrder(given).map((k) => given[k]);
  const width = recipe.crossSection.widthUm;
  const [a0, a1] = sorted[0];
  const [b0, b1] = sorted.length > 1 ? sorted[1] : sorted[0];
  const leftMargin = a0;
  const rightMargin = width - b1;
  const wa = a1 - a0;
  const wb = b1 - b0;
  const x1 = leftMargin + wa;
  const windows: [number, number][] = [[leftMargin, x1], [x1 + stripeUm, x1 + stripeUm + wb]];
  return {
    ...recipe,
    crossSection: { ...recipe.crossSection, widthUm: x1 + stripeUm + wb + rightMargin },
    mask: { windows },
  };
}

function solvePair(recipe: Recipe, stripeUm: number, gapUm: number, limits?: PlanLimits, shouldStop?: () => boolean): StripeSolve {
  // The junctions alone decide: the electrical rules of a trial pair would only cost time.
  const { electrical: _electrical, ...pair } = pairRecipe(recipe, stripeUm);
  void _electrical;
  const report = analyze(simulate(planRecipe(pair, limits), { shouldStop })).report;
  // 3D: the masked distance between two rectangles, the gap between their outlines at the surface.
  const spacing = recipe.mask.rectangles ? pairSpacing3d(report, stripeUm) : report.spacings![0];
  const meets = !spacing.merged && spacing.minimumGapUm !== null && spacing.minimumGapUm >= gapUm;
  return { stripeUm, spacing, meets };
}

export class StripeSearchError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'StripeSearchError';
  }
}

/** A solve at one stripe: whether it meets the rule the search is after. */
export interface BisectionSolve {
  stripeUm: number;
  meets: boolean;
}

export interface BisectionOptions {
  toleranceUm: number;
  /** the first stripe solved, µm */
  guessUm: number;
  /** the first stride away from it, µm (doubled at each further stride) */
  strideUm: number;
  /** the complaint when no stripe within the widenings meets */
  failure: (widestUm: number) => string;
}

/**
 * The narrowest stripe that meets a rule which, once met, stays met for every wider stripe:
 * from the guess, strides (growing) to a stripe that fails and one that meets, then bisection
 * until the bracket is no wider than the tolerance. Returns the widest failing stripe seen
 * (0 when the tolerance itself meets) and the narrowest meeting solve.
 */
export function bisectStripe<S extends BisectionSolve>(run: (stripeUm: number) => S, options: BisectionOptions): { lo: number; hi: S } {
  const { toleranceUm } = options;
  let reach = options.strideUm;
  const first = run(Math.max(toleranceUm, options.guessUm));
  let lo: number;
  let hi: S;
  if (first.meets) {
    // Walk narrower, in growing strides, until a stripe fails (or the tolerance itself meets).
    hi = first;
    for (;;) {
      const s = run(Math.max(toleranceUm, hi.stripeUm - reach));
      if (!s.meets) { lo = s.stripeUm; break; }
      hi = s;
      if (s.stripeUm <= toleranceUm) return { lo: 0, hi };
      reach *= 2;
    }
  } else {
    lo = first.stripeUm;
    for (let k = 0; ; k++) {
      const s = run(lo + reach);
      if (s.meets) { hi = s; break; }
      if (k >= MAX_WIDENINGS) throw new StripeSearchError(options.failure(s.stripeUm));
      lo = s.stripeUm;
      reach *= 2;
    }
  }
  while (hi.stripeUm - lo > toleranceUm) {
    const s = run(0.5 * (lo + hi.stripeUm));
    if (s.meets) hi = s;
    else lo = s.stripeUm;
  }
  return { lo, hi };
}

export function searchStripe(recipe: Recipe, options: StripeSearchOptions): StripeSearch {
  const { gapUm, toleranceUm } = options;
  const solves: StripeSolve[] = [];
  const run = (s: number) => {
    const result = solvePair(recipe, s, gapUm, options.limits, options.shouldStop);
    solves.push(result);
    options.onSolve?.(result, solves.length - 1);
    return result;
  };
  // Without a guess: the junctions reach about plan.reachUm sideways from each mask edge.
  const guess = options.guessUm ?? gapUm + 2 * planRecipe(recipe, options.limits).reachUm;
  const strideUm = options.guessUm !== undefined ? Math.max(4 * toleranceUm, 0.05 * guess) : 0.5 * guess;
  const { lo, hi } = bisectStripe(run, {
    toleranceUm, guessUm: guess, strideUm,
    failure: (widest) => `no stripe up to ${widest.toPrecision(4)} µm keeps a junction-to-junction gap of ${gapUm} µm`,
  });
  return {
    gapUm, toleranceUm, stripeUm: hi.stripeUm, bracketUm: [lo, hi.stripeUm], spacing: hi.spacing, solves,
    recipe: pairRecipe(recipe, hi.stripeUm),
  };
}

/**
 * Error bar of a stripe found on mesh h from the same search on meshes 2h (and 4h): Richardson's,
 * plus the width of the final bisection bracket (the stripe on this mesh that just meets lies
 * anywhere in it, so its width adds to the mesh error and keeps the bar above 0 where the
 * coarser searches land on the same stripe). Null with no coarser search.
 */
export function stripeError(answers: readonly number[], bracketUm: readonly [number, number]): number | null {
  const [f1, f2, f3] = answers;
  return f2 === undefined ? null : Number((richardsonError(f1, f2, f3) + bracketUm[1] - bracketUm[0]).toPrecision(3));
}

export interface StripeSearchWithError extends StripeSearch {
  /** numerical error of stripeUm, µm: Richardson's from the same search on coarser meshes plus the
   *  width of the final bisection bracket; null with no coarser search */
  stripeErrorUm: number | null;
  /** the answers on the meshes h, 2h (and 4h) */
  stripesByMeshUm: number[];
}

/**
 * The search on the default mesh and again on meshes 2 (and 4) times coarser, each started
 * around the previous answer; Richardson extrapolation of the answers gives its error bar.
 * The bisection tolerance adds to that; keep it well below the error bar to see the latter.
 */
export function searchStripeWithError(recipe: Recipe, options: StripeSearchOptions & { levels?: 0 | 1 | 2; onLevel?: (level: number) => void }): StripeSearchWithError {
  const fine = searchStripe(recipe, options);
  const answers = [fine.stripeUm];
  for (let level = 1; level <= (options.levels ?? 1); level++) {
    options.onLevel?.(level);
    const coarse = searchStripe(coarsenedRecipe(recipe, level), { ...options, guessUm: answers[answers.length - 1] });
    answers.push(coarse.stripeUm);
  }
  const stripeErrorUm = stripeError(answers, fine.bracketUm);
  return { ...fine, stripeErrorUm, stripesByMeshUm: answers };
}
