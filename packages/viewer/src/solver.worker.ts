import * as Comlink from 'comlink';
import { analyze, parseRecipe, planRecipe, simulate, stackLayers, type Report } from '@edgewise/solver2d';

/**
 * The solver in a Web Worker, reached through comlink, so a live re-run never blocks the
 * page. The result comes back as transferred buffers, not copies.
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

const api = {
  run(recipe: unknown, onProgress?: ProgressCallback): LiveResult {
    const started = performance.now();
    const plan = planRecipe(parseRecipe(recipe));
    let last = 0;
    const sim = simulate(plan, {
      onProgress: (p) => {
        const now = performance.now();
        if (onProgress && (now - last >= PROGRESS_EVERY_MS || p.done === p.total)) {
          last = now;
          void onProgress(p.done, p.total);
        }
      },
    });
    const { report, field } = analyze(sim);
    const stacked = stackLayers(field);
    const x = Float64Array.from(field.mesh.x);
    const z = Float64Array.from(field.mesh.z);
    const result: LiveResult = { report, x, z, field: stacked, seconds: (performance.now() - started) / 1000 };
    return Comlink.transfer(result, [stacked.buffer, x.buffer, z.buffer]);
  },
};

export type SolverApi = typeof api;

Comlink.expose(api);
