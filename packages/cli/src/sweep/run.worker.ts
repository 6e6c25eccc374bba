import { join } from 'node:path';
import { parentPort, workerData } from 'node:worker_threads';
import * as Comlink from 'comlink';
import nodeEndpoint from 'comlink/dist/umd/node-adapter.js';
import { planRecipe, solveWithErrorBars } from '@edgewise/solver2d';
import { inside, removeFile, writeAtomic } from '../files.ts';
import { withLimitHint } from '../limits.ts';
import { writeRunFolder } from '../output.ts';
import { reportResults } from './csv.ts';
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
    const analysis = withLimitHint(task.limits, () => solveWithErrorBars(plan, {
      levels: task.errorSolves, limits: task.limits,
      shouldStop: () => Atomics.load(stop, STOP_INDEX) !== 0,
      onFraction: (f) => (progress[0] = f),
    }));
    writeRunFolder(task.out, analysis, task.dir);
    writeAtomic(inside(task.out, join(task.dir, RECIPE_FILE)), task.recipeText);
    progress[0] = 1;
    return { windows: reportResults(analysis.report), warnings: analysis.report.warnings };
  },
};

Comlink.expose(api, nodeEndpoint(parentPort));
