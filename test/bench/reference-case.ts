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
