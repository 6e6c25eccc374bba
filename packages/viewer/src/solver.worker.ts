import * as Comlink from 'comlink';
import { fullAxes, parseRecipe, planRecipe, solveWithErrorBars, stackLayers, type Report } from '@edgewise/solver2d';

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
  /** a 3D recipe (mask.rectangles): y cell centres over the full plan view, µm; the field is [layers, nz, ny, nx] */
  y?: Float64Array;
  field: Float64Array;
  seconds: number;
}

export type ProgressCallback = (done: number, total: number) => void;

/** Progress messages at most this often, ms: one per time step would flood the page. */
const PROGRESS_EVERY_MS = 40;

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
    const { report, field } = solveWithErrorBars(plan, { levels: 2, onFraction: (f) => tell(f, false) });
    tell(1, true);
    const stacked = stackLayers(field);
    // 3D: the full plan view's axes (mirrored parts unfolded), as `edgewise run` writes them.
    const axes = field.space ? fullAxes(field.space) : null;
    const x = Float64Array.from(axes ? axes.x : field.mesh.x);
    const z = Float64Array.from(field.mesh.z);
    const y = axes ? Float64Array.from(axes.y) : undefined;
    const result: LiveResult = { report, x, z, ...(y ? { y } : {}), field: stacked, seconds: (performance.now() - started) / 1000 };
    return Comlink.transfer(result, [stacked.buffer, x.buffer, z.buffer, ...(y ? [y.buffer] : [])]);
  },
};

export type SolverApi = typeof api;

Comlink.expose(api);
