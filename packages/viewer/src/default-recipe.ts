/**
 * The recipe the live mode starts from when the opened folder brings none (an invented
 * demo scenario, the same as examples/base-resistor.json).
 */
export const DEFAULT_RECIPE = {
  schema: 'edgewise.recipe/1',
  title: 'base diffusion for a test resistor (demo scenario, invented)',
  substrate: { dopant: 'P', concentrationCm3: 1e15 },
  crossSection: { widthUm: 24 },
  mask: { windows: [[8, 16]] },
  steps: [
    { kind: 'predeposition', dopant: 'B', surfaceConcentrationCm3: 1e20, temperatureC: 950, minutes: 30 },
    { kind: 'drive-in', temperatureC: 1100, minutes: 60 },
  ],
};
