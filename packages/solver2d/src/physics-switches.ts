import { ACTIVATION_LAWS, type ActivationLaw } from './activation.ts';
import type { DiffusionModel } from './plan-terms.ts';
import { FAIR_TSAI_SOURCE } from './phosphorus-kink.ts';
import type { Recipe } from './recipe.ts';
import { RecipeError } from './recipe-terms.ts';

/*
 * The recipe's `physics` switches, resolved against the species its steps introduce: which
 * species get the Fair–Tsai kink and tail and which the active/inactive split, and the list
 * of models used with their sources for the report (`ted` and `oxidationEnhanced` are the
 * point-defect models' own, and add their entries there).
 */

/** A model a run used, for the report. */
export interface ModelUse {
  model: string;
  species: string[];
  source: string;
}

/** What a species needs of the switches to plan its diffusion. */
export interface SpeciesPhysics {
  /** Fair–Tsai kink and tail (phosphorus with the charged-defect model) */
  kink: boolean;
  /** the active/inactive split, or null where all of it is active */
  activation: ActivationLaw | null;
}

const KINK_SPECIES = 'P';

/** One species' models under the switches; `name` and `model` are the species' own. */
export function speciesPhysics(recipe: Recipe, name: string, model: DiffusionModel): SpeciesPhysics {
  const p = recipe.physics ?? {};
  const user = recipe.dopants?.[name] !== undefined;
  return {
    kink: !user && name === KINK_SPECIES && model === 'charged-defect' && p.phosphorusKink !== false,
    activation: !user && p.clustering !== false ? ACTIVATION_LAWS[name] ?? null : null,
  };
}

/**
 * Refuses a switch set to true that no species of the recipe can take (one line naming the
 * field), and lists the models used.
 */
export function modelsUsed(recipe: Recipe, species: readonly { name: string; model: DiffusionModel; physics: SpeciesPhysics }[]): ModelUse[] {
  const p = recipe.physics ?? {};
  const introduced = species.map((s) => s.name).join(', ');
  const kinked = species.filter((s) => s.physics.kink).map((s) => s.name);
  const clustered = species.filter((s) => s.physics.activation !== null);
  if (p.phosphorusKink === true && kinked.length === 0) {
    const p0 = species.find((s) => s.name === KINK_SPECIES && recipe.dopants?.[s.name] === undefined);
    throw new RecipeError('physics.phosphorusKink', p0
      ? 'applies to phosphorus with the charged-defect diffusion model (diffusion.model says intrinsic); set it false or use "charged-defect"'
      : `applies to phosphorus (P), which no step introduces (introduced: ${introduced}); set it false or leave it out`);
  }
  if (p.clustering === true && clustered.length === 0) {
    throw new RecipeError('physics.clustering', `applies to arsenic (As) and boron (B), of which no step introduces either (introduced: ${introduced}); set it false or leave it out`);
  }
  const models: ModelUse[] = [];
  if (species.some((s) => s.model === 'charged-defect')) {
    models.push({
      model: 'charged-defect', species: species.filter((s) => s.model === 'charged-defect').map((s) => s.name),
      source: 'R.B. Fair (1981), charge-state terms tabulated in Plummer, Deal & Griffin (2000) ch. 7 (from memory)',
    });
  }
  if (kinked.length > 0) models.push({ model: 'phosphorus-kink', species: kinked, source: FAIR_TSAI_SOURCE });
  for (const s of clustered) models.push({ model: 'clustering', species: [s.name], source: s.physics.activation!.source });
  return models;
}
