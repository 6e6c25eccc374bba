import * as Comlink from 'comlink';
import { analyze, coarseReports, parseRecipe, planRecipe, simulate, stackLayers, withErrorBars, type Progress, type Report } from '@edgewise/solver2d';

/**
 * The solver in a Web Worker, reached through comlink, so a live re-run never blocks the
 * page. Like `edgewise run`, it solves the recipe on two coarser meshes too, so that the
 * live tile carries the same error bars as a run's. The result comes back as transferred
 * buffers, not copies.
 */
export interface LiveResult {
  report: Report;
  x: Float64Array;
  z: Float64Array;
  field: Float64Array;
  seconds: number;
}

export type ProgressCallback = (done: number, total: number) => void;

/** Progress messages at most this often, ms: one per time step would flood the page. */
const PROGRESS_EVERY_MS = 40;
/** Share of the progress bar for the main solve; the two coarser ones take the rest (as in a sweep worker). */
const MAIN_SHARE = 0.8;
const COARSE_LEVELS = 2;

const api = {
  run(recipe: unknown, onProgress?: ProgressCallback): LiveResult {
    const started = performance.now();
    const plan = planRecipe(parseRecipe(recipe));
    let last = 0;
    /** Reports a fraction of the whole job, in thousandths. */
    const tell = (fraction: number, final: boolean) => {
      const now = performance.now();
      if (onProgress && (now - last >= PROGRESS_EVERY_MS || final)) {
        last = now;
        void onProgress(Math.round(1000 * fraction), 1000);
      }
    };
    const sim = simulate(plan, { onProgress: (p: Progress) => tell(MAIN_SHARE * (p.done / p.total), false) });
    const analysis = analyze(sim);
    let level = 1;
    const coarse = coarseReports(plan.recipe, {
      levels: COARSE_LEVELS,
      onLevel: (l) => (level = l),
      onProgress: (p) => tell(MAIN_SHARE + (1 - MAIN_SHARE) * ((level - 1 + p.done / p.total) / COARSE_LEVELS), false),
    });
    tell(1, true);
    const field = analysis.field;
    const withBars = withErrorBars([analysis.report, ...coarse], plan.recipe);
    const stacked = stackLayers(field);
    const x = Float64Array.from(field.mesh.x);
    const z = Float64Array.from(field.mesh.z);
    const result: LiveResult = { report: withBars, x, z, field: stacked, seconds: (performance.now() - started) / 1000 };
    return Comlink.transfer(result, [stacked.buffer, x.buffer, z.buffer]);
  },
};

export type SolverApi = typeof api;

Comlink.expose(api);
