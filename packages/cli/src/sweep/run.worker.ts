import { join } from 'node:path';
import { parentPort, workerData } from 'node:worker_threads';
import * as Comlink from 'comlink';
import nodeEndpoint from 'comlink/dist/umd/node-adapter.js';
import { analyze, coarseReports, planRecipe, simulate, withErrorBars } from '@edgewise/solver2d';
import { inside, removeFile, writeAtomic } from '../files.ts';
import { withLimitHint } from '../limits.ts';
import { writeRunFolder } from '../output.ts';
import { PROGRESS_OFFSET, RECIPE_FILE, STOP_INDEX, type RunOutcome, type RunTask, type RunWorkerApi } from './task.ts';

/**
 * One sweep worker: runs a recipe with solver2d as it is (the same solve, error bars and
 * report as `edgewise run`) and writes the run folder.
 */
if (!parentPort) throw new Error('run.worker is a worker thread entry, not a program');
const control = (workerData as { control: SharedArrayBuffer }).control;
const stop = new Int32Array(control, 0, 1);
const progress = new Float64Array(control, PROGRESS_OFFSET, 1);

const api: RunWorkerApi = {
  run(task: RunTask): RunOutcome {
    // An old marker would vouch for files this run is about to replace.
    removeFile(inside(task.out, join(task.dir, RECIPE_FILE)));
    progress[0] = 0;
    const plan = withLimitHint(task.limits, () => planRecipe(task.recipe, task.limits));
    const shouldStop = () => Atomics.load(stop, STOP_INDEX) !== 0;
    // The coarser solves cost a fraction of the main one (a quarter of the points, fewer steps).
    const mainShare = task.errorSolves === 0 ? 1 : 0.8;
    const sim = withLimitHint(task.limits, () => simulate(plan, { onProgress: (p) => (progress[0] = mainShare * (p.done / p.total)), shouldStop }));
    const analysis = analyze(sim);
    if (task.errorSolves !== 0) {
      let level = 1;
      const levels = task.errorSolves;
      const reports = coarseReports(plan.recipe, {
        levels, shouldStop, limits: task.limits, onLevel: (l) => (level = l),
        onProgress: (p) => (progress[0] = mainShare + (1 - mainShare) * ((level - 1 + p.done / p.total) / levels)),
      });
      analysis.report = withErrorBars([analysis.report, ...reports], plan.recipe);
    }
    writeRunFolder(task.out, analysis, task.dir);
    writeAtomic(inside(task.out, join(task.dir, RECIPE_FILE)), task.recipeText);
    progress[0] = 1;
    return { windows: analysis.report.windows, warnings: analysis.report.warnings };
  },
};

Comlink.expose(api, nodeEndpoint(parentPort));
