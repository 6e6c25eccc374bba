import { analyze, type Analysis, type Report } from './analyze.ts';
import { CORNERS, EDGES, type RectangleReport } from './report.ts';

type RectangleErrors = NonNullable<RectangleReport['errors']>;
import { DEFAULT_STEP_GROWTH, planRecipe, type Plan, type PlanLimits } from './plan.ts';
import type { Recipe } from './recipe.ts';
import { simulate, type SimulateOptions } from './simulate.ts';
import {
  errorBar, observedOrder, SPACING_ERROR_KEYS, WINDOW_ERROR_KEYS,
  type ErrorBars, type ErrorEstimateSummary, type SpacingErrorKey, type WindowErrorKey,
} from './error-bars.ts';

/*
 * Error bars of every reported length from solves of the same recipe on coarser meshes;
 * the estimate itself, and the keys a report carries, are error-bars.ts's.
 */

/** The recipe with the mesh `2^level` times coarser and time steps `2^level` times longer. */
export function coarsenedRecipe(recipe: Recipe, level: number): Recipe {
  const f = 2 ** -level;
  const mesh = { ...(recipe.mesh ?? {}) };
  mesh.refine = (mesh.refine ?? 1) * f;
  if (mesh.columns !== undefined) mesh.columns = Math.max(8, Math.round(mesh.columns * f));
  if (mesh.rows !== undefined) mesh.rows = Math.max(8, Math.round(mesh.rows * f));
  if (mesh.surfaceSpacingUm !== undefined) mesh.surfaceSpacingUm /= f;
  if (mesh.edgeSpacingUm !== undefined) mesh.edgeSpacingUm /= f;
  if (mesh.maxSpacingUm !== undefined) mesh.maxSpacingUm /= f;
  const growth = recipe.numerics?.stepGrowth ?? DEFAULT_STEP_GROWTH;
  // The electrical results carry error bars of their own (electrical.ts): a coarser solve leaves them out.
  const { electrical: _electrical, ...rest } = recipe;
  void _electrical;
  return { ...rest, mesh, numerics: { ...(recipe.numerics ?? {}), stepGrowth: 1 + (growth - 1) / f } };
}

function median(v: number[]): number | null {
  if (v.length === 0) return null;
  const s = [...v].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

/**
 * The default report with error bars: `reports` are the same recipe solved on the default
 * mesh and then 2 (and 4) times coarser, all with the same windows.
 */
export function withErrorBars(reports: Report[], recipe: Recipe): Report {
  const [fine] = reports;
  const windows = fine.windows.map((w, k) => {
    const errors: ErrorBars<WindowErrorKey> = {};
    for (const key of WINDOW_ERROR_KEYS) {
      if (w[key] === undefined) continue;
      errors[key] = errorBar(reports.map((r) => r.windows[k]?.[key]));
    }
    // A layer's bar where every solve found the same stack (types in the same order).
    const stacks = reports.map((r) => r.windows[k]?.layerStack ?? []);
    const same = stacks.every((s) => s.length === stacks[0].length && s.every((l, n) => l.type === stacks[0][n].type));
    const layerStack = w.layerStack?.map((l, n) => ({
      ...l, errors: { sheetResistanceOhmSq: same ? errorBar(stacks.map((s) => s[n].sheetResistanceOhmSq)) : null },
    }));
    return { ...w, ...(layerStack ? { layerStack } : {}), errors };
  });
  const spacings = fine.spacings?.map((s, k) => {
    const errors: ErrorBars<SpacingErrorKey> = {};
    for (const key of SPACING_ERROR_KEYS) {
      // Once merged a gap is 0 by definition and has no error of its own.
      errors[key] = reports.every((r) => r.spacings?.[k] && !r.spacings[k].merged) ? errorBar(reports.map((r) => r.spacings![k][key])) : null;
    }
    return { ...s, errors };
  });
  const rectangles = fine.rectangles?.map((r, k) => {
    const bar = (pick: (x: RectangleReport) => number | null) => errorBar(reports.map((x) => (x.rectangles?.[k] ? pick(x.rectangles[k]) : null)));
    const edgeReachUm = Object.fromEntries(EDGES.map((e) => [e, bar((x) => x.edgeReachUm[e])])) as RectangleErrors['edgeReachUm'];
    const cornerReachUm = Object.fromEntries(CORNERS.map((c) => [c, bar((x) => x.cornerReachUm[c])])) as RectangleErrors['cornerReachUm'];
    return { ...r, errors: { junctionDepthUm: bar((x) => x.junctionDepthUm), edgeReachUm, cornerReachUm } };
  });
  const orders: number[] = [];
  if (reports.length >= 3) {
    for (let k = 0; k < fine.windows.length; k++) {
      for (const key of ['junctionDepthUm', 'lateralLeftUm', 'lateralRightUm'] as const) {
        const [f1, f2, f3] = reports.map((r) => r.windows[k]?.[key]);
        if (typeof f1 === 'number' && typeof f2 === 'number' && typeof f3 === 'number') {
          const p = observedOrder(f1, f2, f3);
          if (p !== null) orders.push(p);
        }
      }
    }
  }
  const p = median(orders);
  const errorEstimate: ErrorEstimateSummary = {
    method: reports.length >= 3
      ? 'Richardson extrapolation from meshes h, 2h, 4h (time steps likewise); order measured per quantity: within 0.2 of 2, used (at most 2) with safety factor 1.25; below, used (at least 0.5) with safety factor 3; above 2.2 or not monotone, the cautious bound max(|f1 − f2|, |f2 − f3|/2)'
      : 'Richardson extrapolation from meshes h and 2h (time steps likewise), formal order 2, safety factor 3',
    meshes: reports.map((r, level) => ({
      refine: coarsenedRecipe(recipe, level).mesh!.refine!,
      stepGrowth: Number(coarsenedRecipe(recipe, level).numerics!.stepGrowth!.toPrecision(6)),
      columns: r.mesh.columns,
      rows: r.mesh.rows,
    })),
    observedOrder: p === null ? null : Number(p.toPrecision(3)),
  };
  return { ...fine, windows, ...(spacings ? { spacings } : {}), ...(rectangles ? { rectangles } : {}), errorEstimate };
}

interface ErrorSolveOptions extends SimulateOptions {
  /** coarser meshes to solve: 1 (2h) or 2 (2h and 4h) */
  levels?: 1 | 2;
  limits?: PlanLimits;
  /** called before each coarser solve with its level */
  onLevel?: (level: number) => void;
}

/** Solves the recipe on the coarser meshes and returns their reports, coarsest last. */
export function coarseReports(recipe: Recipe, options: ErrorSolveOptions = {}): Report[] {
  const out: Report[] = [];
  for (let level = 1; level <= (options.levels ?? 2); level++) {
    options.onLevel?.(level);
    out.push(analyze(simulate(planRecipe(coarsenedRecipe(recipe, level), options.limits), options)).report);
  }
  return out;
}

/**
 * Share of the whole job that the main solve takes in `solveWithErrorBars`' progress: the
 * coarser solves cost a fraction of it (a quarter of the points and fewer steps each).
 */
const MAIN_SOLVE_SHARE = 0.8;

interface SolveWithErrorBarsOptions {
  /** coarser solves: 0 (no error bars), 1 (2h) or 2 (2h and 4h) */
  levels: 0 | 1 | 2;
  limits?: PlanLimits;
  shouldStop?: () => boolean;
  /** the fraction of the whole job done, main solve and coarser ones together */
  onFraction?: (fraction: number) => void;
}

/** The plan solved and analysed, its report carrying the error bars of `levels` coarser solves. */
export function solveWithErrorBars(plan: Plan, options: SolveWithErrorBarsOptions): Analysis {
  const { levels, limits, shouldStop, onFraction } = options;
  const mainShare = levels === 0 ? 1 : MAIN_SOLVE_SHARE;
  const analysis = analyze(simulate(plan, { shouldStop, onProgress: (p) => onFraction?.(mainShare * (p.done / p.total)) }));
  if (levels === 0) return analysis;
  let level = 1;
  const reports = coarseReports(plan.recipe, {
    levels, limits, shouldStop, onLevel: (l) => (level = l),
    onProgress: (p) => onFraction?.(mainShare + (1 - mainShare) * ((level - 1 + p.done / p.total) / levels)),
  });
  analysis.report = withErrorBars([analysis.report, ...reports], plan.recipe);
  return analysis;
}
