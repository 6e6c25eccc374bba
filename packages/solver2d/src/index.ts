export { parseRecipe, recipeSchema, RECIPE_SCHEMA_ID, STEP_KINDS, type Recipe, type Step } from './recipe.ts';
export { RecipeError } from './recipe-terms.ts';
export { planRecipe, DEFAULT_LIMITS, type Plan, type PlanLimits, type StepPlan } from './plan.ts';
export { simulate, SolverError, StoppedError, openWidth, type Simulation, type SimulateOptions, type Progress } from './simulate.ts';
export { analyze, REPORT_SCHEMA_ID, type Report, type WindowReport, type Analysis } from './analyze.ts';
export { buildField, stackLayers, type Field } from './field.ts';
export { fullAxes } from './space3d.ts';
export type { RectangleReport, PlanView } from './report.ts';
export { BUILTIN_DOPANTS, intrinsicDiffusivityCm2PerS, type Dopant } from './dopants.ts';
export type { Mesh } from './mesh.ts';
export { zeroContours, type Polyline, type Point } from './junction.ts';
export { MOBILITY_FITS, mobilityCm2PerVs, conductivitySPerCm, resistivityOhmCm, fitForDopant, type MobilityFit } from './mobility.ts';
export { coarseReports, coarsenedRecipe, withErrorBars, solveWithErrorBars } from './error-estimate.ts';
export { richardsonError, type ErrorEstimateSummary } from './error-bars.ts';
export { searchStripe, searchStripeWithError, pairRecipe, StripeSearchError, type StripeSearch, type StripeSearchWithError, type StripeSolve } from './stripe-search.ts';
// The report's schema (zod) is its own entry, '@edgewise/solver2d/report-schema', so that what
// imports the solver does not load a schema library with it.
export { PunchThroughError, searchPunchThrough, searchPunchThroughWithError, spacingBiasOf, type PunchThroughSearch, type PunchThroughSearchWithError, type PunchThroughSolve } from './punch-through.ts';
export { maskedStretches, windowOrder } from './mask.ts';
export { SPACING_SCHEMA_ID, SWEEP_SCHEMA_ID } from './schema-ids.ts';
export type { PairSpacing } from './spacing.ts';

import { analyze, type Analysis } from './analyze.ts';
import { planRecipe, type PlanLimits } from './plan.ts';
import { parseRecipe } from './recipe.ts';
import { simulate, type SimulateOptions } from './simulate.ts';

/** parse → plan → simulate → analyze, for callers that want the whole job in one call. */
export function runRecipe(input: unknown, options: SimulateOptions & { limits?: PlanLimits } = {}): Analysis {
  const plan = planRecipe(parseRecipe(input), options.limits);
  return analyze(simulate(plan, options));
}
