import { parseRecipe, planRecipe } from '../../packages/solver2d/src/index.ts';

/**
 * The benchmark's reference case: one window, constant source, Cs/NB = 1e4, xj about 1 µm.
 * (Boron at 1100 °C for 36 min into 1e16 cm^-3 n-type silicon; scenario invented.)
 * The linear case uses the intrinsic diffusivity; the same recipe with the charged-defect
 * model is the nonlinear case (p/ni ≈ 8 at the surface at 1100 °C).
 */
export function referenceRecipe(mesh: Record<string, number> = {}, numerics: Record<string, number> = {},
                                model: 'intrinsic' | 'charged-defect' = 'intrinsic') {
  return {
    schema: 'edgewise.recipe/1',
    title: 'benchmark reference: constant source, Cs/NB = 1e4 (invented scenario)',
    substrate: { dopant: 'P', concentrationCm3: 1e16 },
    crossSection: { widthUm: 12 },
    mask: { windows: [[4, 8]] },
    mesh,
    numerics,
    diffusion: { model },
    steps: [{ kind: 'predeposition', dopant: 'B', surfaceConcentrationCm3: 1e20, temperatureC: 1100, minutes: 36 }],
  };
}

/**
 * A recipe planned twice, with one model for every species (the recipe's own per-species
 * choices set aside): charged-defect, and intrinsic on the charged-defect plan's mesh and mask,
 * so that the two solve the same points.
 */
export function modelPlans(recipe: unknown) {
  const withModel = (model: string) => parseRecipe({ ...(recipe as object), diffusion: { ...((recipe as { diffusion?: object }).diffusion ?? {}), model, species: undefined } });
  const nonlinear = planRecipe(withModel('charged-defect'));
  const linear = { ...planRecipe(withModel('intrinsic')), mesh: nonlinear.mesh, mask: nonlinear.mask };
  return { nonlinear, linear };
}
