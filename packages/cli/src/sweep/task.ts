import type { PlanLimits, Recipe } from '@edgewise/solver2d';
import type { WindowResult } from './csv.ts';

/** What the main thread sends a worker for one run, and what comes back. */
export interface RunTask {
  id: number;
  /** the sweep folder, absolute: no file of the run may lie outside it */
  out: string;
  /** the run folder, relative to `out` */
  dir: string;
  /** the run's recipe, validated by the main thread (the worker plans it as it is) */
  recipe: Recipe;
  /** the recipe as the user's input gave it, as written to the folder's recipe.json */
  recipeText: string;
  /** coarser solves for the error bars (0: none; 1: mesh 2h; 2: 2h and 4h) */
  errorSolves: ErrorSolves;
  /** work limits the run is planned under (default: the solver's) */
  limits?: PlanLimits;
}

export type ErrorSolves = 0 | 1 | 2;

export interface RunOutcome {
  /** per window (per rectangle in 3D) */
  windows: WindowResult[];
  warnings: string[];
}

export interface RunWorkerApi {
  run(task: RunTask): RunOutcome;
}

/**
 * Written into a run folder after writeRunFolder has finished, so its presence with a matching
 * hash marks a finished run; it is also a recipe `edgewise run` takes as it is.
 */
export const RECIPE_FILE = 'recipe.json';

/**
 * Shared memory between the main thread and one worker: an Int32 stop flag at byte 0 (set to
 * abandon the running run) and the running run's fraction done as a Float64 at byte 8.
 */
export const CONTROL_BYTES = 16;
export const STOP_INDEX = 0;
export const PROGRESS_OFFSET = 8;
