/**
 * Recipes whose fields were recorded (test/fixtures/before-high-concentration-models.json) with
 * the code before the kink-and-tail and active/inactive models: with every physics switch off
 * the solver must give them again (invented scenarios, small meshes).
 */
export const REGRESSION_CASES: Record<string, Record<string, unknown>> = {
  'phosphorus predeposition at solubility': {
    substrate: { dopant: 'B', concentrationCm3: 1e16 }, crossSection: { widthUm: 3 }, mask: { windows: [[0, 2]] },
    mesh: { refine: 0.5 },
    steps: [{ kind: 'predeposition', dopant: 'P', surfaceConcentrationCm3: 'solubility', temperatureC: 900, minutes: 10 }],
  },
  'arsenic implant and anneal': {
    substrate: { dopant: 'B', concentrationCm3: 1e16 }, crossSection: { widthUm: 2 }, mask: { windows: [[0, 1]] },
    mesh: { refine: 0.5 },
    steps: [{ kind: 'implant', dopant: 'As', doseCm2: 5e15, projectedRangeUm: 0.05, straggleUm: 0.02 },
      { kind: 'anneal', temperatureC: 1000, minutes: 20 }],
  },
  'boron film, drive-in, then arsenic': {
    substrate: { dopant: 'P', concentrationCm3: 1e15 }, crossSection: { widthUm: 4 }, mask: { windows: [[0, 2]] },
    mesh: { refine: 0.5 },
    steps: [{ kind: 'film', dopant: 'B', doseCm2: 1e16 }, { kind: 'drive-in', temperatureC: 950, minutes: 20 },
      { kind: 'predeposition', dopant: 'As', surfaceConcentrationCm3: 1e20, temperatureC: 950, minutes: 10 }],
  },
};
