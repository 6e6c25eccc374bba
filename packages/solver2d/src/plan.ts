import { intrinsicDiffusivity, type DopantType } from './dopants.ts';
import type { Mask } from './mask.ts';
import type { Mesh } from './mesh.ts';
import type { Space3d } from './space3d.ts';
import { profileReach, sizeMesh } from './mesh-sizing.ts';
import type { Recipe, Step } from './recipe.ts';
import { modelsUsed, speciesPhysics, type ModelUse } from './physics-switches.ts';
import { checkRecipe, resolveDopant } from './recipe-checks.ts';
import { RecipeError } from './recipe-terms.ts';
import { DEFAULT_LIMITS, type Numerics, type PlanLimits, type SpeciesPlan, type StepPlan } from './plan-terms.ts';
import { overStep } from './thermal-budget.ts';
import { interpolateSolubility, solidSolubilityCm3 } from './solubility.ts';
import { effectiveBudgetUm2, planEnhancements, resolvePhysics, type PhysicsSwitches } from './point-defect-enhancement.ts';
import { minutesToSeconds } from './units.ts';

/*
 * The plan of a recipe: its species resolved, its steps in solver units with their thermal
 * budgets, and the mesh sized for them (mesh-sizing.ts). Cross-field checks run first
 * (recipe-checks.ts).
 */

export { DEFAULT_LIMITS, type DiffusionModel, type Numerics, type PlanLimits, type SpeciesPlan, type StepPlan } from './plan-terms.ts';
export { integrate, overStep, temperatureAt } from './thermal-budget.ts';

export interface Plan {
  recipe: Recipe;
  substrate: { dopant: string; type: DopantType; concentrationCm3: number };
  species: SpeciesPlan[];
  steps: StepPlan[];
  mesh: Mesh;
  mask: Mask;
  /** the 3D domain of a recipe with mask.rectangles (then `mesh` is its x–z section and `mask` has no windows), else null */
  space: Space3d | null;
  numerics: Numerics;
  /** ∫D dt per species over the whole recipe (intrinsic D), µm² */
  thermalBudgetUm2: Record<string, number>;
  /** the diffusion models the run uses, with their sources (for the report) */
  models: ModelUse[];
  /** the 1D junction-depth estimate the mesh was sized from, µm */
  reachUm: number;
  limits: PlanLimits;
  warnings: string[];
  /** the recipe's physics switches as they apply to it */
  physics: PhysicsSwitches;
}

/**
 * Ratio of successive time steps. Peaceman–Rachford's error in xj goes as (Δt/t)², measured
 * on the reference case at about 0.17 % for 1.07 (and 1 % for 1.2).
 */
export const DEFAULT_STEP_GROWTH = 1.07;

function solubilityOf(recipe: Recipe, name: string): (temperatureC: number) => number | string {
  const table = recipe.dopants?.[name]?.solubilityCm3;
  if (!table) return (t) => solidSolubilityCm3(name, t);
  const sorted = [...table].sort((a, b) => a[0] - b[0]);
  return (t) => interpolateSolubility(sorted, t);
}

function stepSeconds(step: Step): number {
  if (step.kind === 'implant') return 0;
  if (step.kind === 'film') return step.minutes ? minutesToSeconds(step.minutes) : 0;
  return minutesToSeconds(step.minutes);
}

function stepTemperature(step: Step): number | [number, number] | null {
  if (step.kind === 'implant') return null;
  if (step.kind === 'film') return step.temperatureC ?? null;
  return step.temperatureC;
}

/** The species the steps introduce, in order, each with its model; and the step that first introduces each. */
function resolveSpecies(recipe: Recipe): { species: SpeciesPlan[]; firstStep: Record<string, number> } {
  const species: SpeciesPlan[] = [];
  const firstStep: Record<string, number> = {};
  const models = recipe.diffusion?.species ?? {};
  recipe.steps.forEach((step, k) => {
    if (step.kind !== 'predeposition' && step.kind !== 'film' && step.kind !== 'implant') return;
    const dopant = resolveDopant(recipe, step.dopant, `steps[${k}].dopant`);
    if (step.dopant in firstStep) return;
    firstStep[step.dopant] = k;
    const charged = dopant.components.single !== undefined || dopant.components.double !== undefined;
    const model = models[step.dopant] ?? recipe.diffusion?.model ?? (charged ? 'charged-defect' : 'intrinsic');
    species.push({
      name: step.dopant, type: dopant.type, dopant, model,
      fieldEnhancement: recipe.diffusion?.fieldEnhancement ?? true,
      solubility: solubilityOf(recipe, step.dopant),
      ...speciesPhysics(recipe, step.dopant, model),
    });
  });
  return { species, firstStep };

}

/** The steps in solver units, each with the thermal budget of every species present. */
function planSteps(recipe: Recipe, species: SpeciesPlan[], firstStep: Record<string, number>, physics: PhysicsSwitches): StepPlan[] {
  const steps: StepPlan[] = recipe.steps.map((step, k) => {
    const temperatureC = stepTemperature(step);
    const startC = temperatureC === null ? null : typeof temperatureC === 'number' ? temperatureC : temperatureC[0];
    const endC = temperatureC === null ? null : typeof temperatureC === 'number' ? temperatureC : temperatureC[1];
    let surface: number | null = null;
    let atSolubility = false;
    if (step.kind === 'predeposition') {
      if (step.surfaceConcentrationCm3 === 'solubility') {
        atSolubility = true;
        const sp = species.find((s) => s.name === step.dopant)!;
        for (const t of [startC!, endC!]) {
          const v = sp.solubility(t);
          if (typeof v === 'string') throw new RecipeError(`steps[${k}].surfaceConcentrationCm3`, v);
        }
      } else surface = step.surfaceConcentrationCm3;
    }
    return {
      index: k, kind: step.kind, temperatureC, startC, endC, seconds: stepSeconds(step),
      dopant: step.kind === 'predeposition' || step.kind === 'film' || step.kind === 'implant' ? step.dopant : null,
      surfaceConcentrationCm3: surface,
      surfaceAtSolubility: atSolubility,
      doseCm2: step.kind === 'film' || step.kind === 'implant' ? step.doseCm2 : null,
      implant: step.kind === 'implant'
        ? { doseCm2: step.doseCm2, projectedRangeUm: step.projectedRangeUm, straggleUm: step.straggleUm, lateralStraggleUm: step.lateralStraggleUm ?? step.straggleUm }
        : null,
      budgetUm2: {},
      intrinsicBudgetUm2: {},
      ambient: (step.kind === 'drive-in' || step.kind === 'anneal' ? step.ambient : undefined) ?? 'inert',
      poolPerCm: 0,
      oxideUm: 0,
    };
  });
  planEnhancements(steps, steps.map((st) => st.implant), physics);
  for (const st of steps) {
    for (const s of species) {
      if (st.index < firstStep[s.name]) continue;
      const intrinsic = overStep(st, (t) => intrinsicDiffusivity(s.dopant, t));
      st.intrinsicBudgetUm2[s.name] = intrinsic;
      st.budgetUm2[s.name] = st.seconds > 0 && st.startC !== null ? effectiveBudgetUm2(st, s.name, s.dopant, intrinsic, 0, st.seconds, physics) : intrinsic;
    }
  }
  return steps;
}

export function planRecipe(recipe: Recipe, limits: PlanLimits = DEFAULT_LIMITS): Plan {
  checkRecipe(recipe);
  const substrateDopant = resolveDopant(recipe, recipe.substrate.dopant, 'substrate.dopant');
  const warnings: string[] = [];
  const background = recipe.substrate.concentrationCm3;
  const { species, firstStep } = resolveSpecies(recipe);
  const physics = resolvePhysics(recipe, species.map((s) => s.name));
  const steps = planSteps(recipe, species, firstStep, physics);
  const models = modelsUsed(recipe, species.map((s) => ({ name: s.name, model: s.model, physics: { kink: s.kink, activation: s.activation } })));
  const thermalBudgetUm2: Record<string, number> = {};
  for (const s of species) thermalBudgetUm2[s.name] = steps.reduce((sum, st) => sum + (st.budgetUm2[s.name] ?? 0), 0);
  const profile = profileReach(steps, species, thermalBudgetUm2, background);
  const { mesh, mask, space } = sizeMesh(recipe, recipe.mask.windows ?? [], profile, limits, warnings);
  return {
    recipe,
    substrate: { dopant: recipe.substrate.dopant, type: substrateDopant.type, concentrationCm3: background },
    species, steps, mesh, mask, space,
    numerics: { stepGrowth: recipe.numerics?.stepGrowth ?? DEFAULT_STEP_GROWTH, startupSteps: recipe.numerics?.startupSteps ?? 3 },
    thermalBudgetUm2, models, reachUm: profile.reachUm, limits, warnings, physics,
  };
}

