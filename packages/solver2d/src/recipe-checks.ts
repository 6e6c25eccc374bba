import { BUILTIN_DOPANTS, type Dopant } from './dopants.ts';
import { windowOrder, type Window } from './mask.ts';
import type { Recipe } from './recipe.ts';
import { RecipeError } from './recipe-terms.ts';
import { checkRectangles } from './space3d.ts';

/*
 * Checks of a recipe that its schema cannot make, across fields: windows against the
 * cross-section and each other, dopant names against the table, a film's time against its
 * temperature. recipe.ts checks each field alone; planning calls checkRecipe first.
 */

/** Window edges closer than this to each other or to a wall (but not on it) are refused, µm. */
const MIN_FEATURE_UM = 1e-3;

function checkWindows(windows: readonly Window[], widthUm: number): void {
  windows.forEach(([x0, x1], k) => {
    if (!(x1 > x0)) throw new RecipeError(`mask.windows[${k}]`, `must have x1 > x0: a window needs a positive width (got [${x0}, ${x1}] µm)`);
    if (x1 > widthUm) throw new RecipeError(`mask.windows[${k}]`, `must lie inside the cross-section [0, ${widthUm}] µm (got [${x0}, ${x1}] µm)`);
    if (x1 - x0 < MIN_FEATURE_UM) throw new RecipeError(`mask.windows[${k}]`, `must be at least ${MIN_FEATURE_UM} µm wide (got [${x0}, ${x1}] µm)`);
    for (const [edge, wall] of [[x0, 0], [x1, widthUm]] as const) {
      if (edge !== wall && Math.abs(edge - wall) < MIN_FEATURE_UM) {
        throw new RecipeError(`mask.windows[${k}]`, `has an edge ${Math.abs(edge - wall)} µm from a side wall: put it on the wall or at least ${MIN_FEATURE_UM} µm from it`);
      }
    }
  });
  const order = windowOrder(windows);
  for (let m = 1; m < order.length; m++) {
    const prev = { k: order[m - 1], w: windows[order[m - 1]] };
    const cur = { k: order[m], w: windows[order[m]] };
    if (cur.w[0] - prev.w[1] < MIN_FEATURE_UM) {
      throw new RecipeError(`mask.windows[${cur.k}]`, `overlaps, touches or comes within ${MIN_FEATURE_UM} µm of mask.windows[${prev.k}] ([${cur.w[0]}, ${cur.w[1]}] and [${prev.w[0]}, ${prev.w[1]}] µm); merge them into one window`);
    }
  }
}


/** The windows of a 2D recipe; a 3D one (mask.rectangles) has none, which `purpose` cannot take. */
export function windowsOf(recipe: Recipe, purpose: string): [number, number][] {
  if (recipe.mask.windows === undefined) throw new RecipeError('mask.windows', `is required ${purpose} (this recipe has mask.rectangles, a 3D plan view)`);
  return recipe.mask.windows;
}

/** A dopant by name: the recipe's own definition, else the built-in table's. */
export function resolveDopant(recipe: Recipe, name: string, field: string): Dopant {
  const user = recipe.dopants?.[name];
  if (user) {
    return {
      name, type: user.type, source: 'user-defined in the recipe',
      components: {
        neutral: { D0Cm2PerS: user.D0Cm2PerS, EaEv: user.EaEv },
        ...(user.singlyCharged ? { single: user.singlyCharged } : {}),
        ...(user.doublyCharged ? { double: user.doublyCharged } : {}),
      },
    };
  }
  const builtin = BUILTIN_DOPANTS[name];
  if (!builtin) {
    const known = [...Object.keys(BUILTIN_DOPANTS), ...Object.keys(recipe.dopants ?? {})].join(', ');
    throw new RecipeError(field, `unknown dopant ${JSON.stringify(name)} (known: ${known}; add others under "dopants")`);
  }
  return builtin;
}

/** A film with minutes needs a temperature, and one with a temperature needs minutes. */
function checkFilmTiming(recipe: Recipe): void {
  recipe.steps.forEach((step, index) => {
    if (step.kind !== 'film') return;
    if (step.minutes !== undefined && step.temperatureC === undefined) {
      throw new RecipeError(`steps[${index}].temperatureC`, 'is required when a film step has minutes: a number from 600 to 1400 °C or a ramp [start, end]');
    }
    if (step.minutes === undefined && step.temperatureC !== undefined) {
      throw new RecipeError(`steps[${index}].minutes`, 'is required when a film step has a temperature: a number above 0 and up to 1e5 minutes');
    }
  });
}

/** Every cross-field check, in the order a reader meets the fields; throws the first RecipeError. */
export function checkRecipe(recipe: Recipe): void {
  const { widthUm, lengthUm } = recipe.crossSection;
  if (recipe.mask.rectangles) {
    if (lengthUm === undefined) throw new RecipeError('crossSection.lengthUm', 'is required with mask.rectangles (a 3D plan view): its extent in y, a number above 0 and up to 1e4 µm');
    checkRectangles(recipe.mask.rectangles, widthUm, lengthUm);
  } else {
    if (lengthUm !== undefined) throw new RecipeError('crossSection.lengthUm', 'is for a 3D plan view (mask.rectangles); a 2D cross-section (mask.windows) has none: remove it');
    checkWindows(recipe.mask.windows ?? [], widthUm);
  }
  resolveDopant(recipe, recipe.substrate.dopant, 'substrate.dopant');
  const introduced = new Set<string>();
  recipe.steps.forEach((step, k) => {
    if (step.kind !== 'predeposition' && step.kind !== 'film' && step.kind !== 'implant') return;
    resolveDopant(recipe, step.dopant, `steps[${k}].dopant`);
    introduced.add(step.dopant);
  });
  if (introduced.size === 0) throw new RecipeError('steps', 'introduce no dopant: add a predeposition, film or implant step');
  for (const name of Object.keys(recipe.diffusion?.species ?? {})) {
    if (!introduced.has(name)) throw new RecipeError(`diffusion.species.${name}`, `names a dopant no step introduces (introduced: ${[...introduced].join(', ')})`);
  }
  checkFilmTiming(recipe);
  if (recipe.electrical) {
    if (recipe.mask.rectangles !== undefined) throw new RecipeError('electrical', 'is computed on a 2D cross-section (mask.windows), not on a 3D plan view (mask.rectangles): remove one of them');
    const substrateType = resolveDopant(recipe, recipe.substrate.dopant, 'substrate.dopant').type;
    if (![...introduced].some((name) => resolveDopant(recipe, name, 'steps').type !== substrateType)) {
      throw new RecipeError('electrical', `needs a junction to reverse-bias, but every dopant of the recipe is a${substrateType === 'donor' ? ' donor' : 'n acceptor'} like the substrate's: add a dopant of the other type or remove electrical`);
    }
  }
}
