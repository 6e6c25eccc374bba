/** Recipe builders for the tests; every scenario here is invented for testing. */

/** A user-defined acceptor with a chosen Arrhenius law, so the test knows D exactly. */
export const TEST_DOPANT = { type: 'acceptor', D0Cm2PerS: 1.0, EaEv: 3.5 } as const;

export interface CaseOptions {
  widthUm: number;
  windows: [number, number][];
  background?: number;
  mesh?: Record<string, number>;
  numerics?: Record<string, number>;
}

/** Everything but the steps: substrate, cross-section, mask, the test dopant, overrides. */
function caseRecipe(o: CaseOptions, title: string) {
  return {
    title,
    substrate: { dopant: 'P', concentrationCm3: o.background ?? 1e16 },
    crossSection: { widthUm: o.widthUm },
    mask: { windows: o.windows },
    dopants: { Q: TEST_DOPANT },
    ...(o.mesh ? { mesh: o.mesh } : {}),
    ...(o.numerics ? { numerics: o.numerics } : {}),
  };
}

export function predepositionRecipe(o: CaseOptions & { cs: number; temperatureC: number; minutes: number }) {
  return {
    ...caseRecipe(o, 'test: constant source (invented)'),
    steps: [{ kind: 'predeposition', dopant: 'Q', surfaceConcentrationCm3: o.cs, temperatureC: o.temperatureC, minutes: o.minutes }],
  };
}

export function filmRecipe(o: CaseOptions & { dose: number; temperatureC: number; minutes: number }) {
  return {
    ...caseRecipe(o, 'test: film source then drive-in (invented)'),
    steps: [
      { kind: 'film', dopant: 'Q', doseCm2: o.dose },
      { kind: 'drive-in', temperatureC: o.temperatureC, minutes: o.minutes },
    ],
  };
}

export interface ImplantOptions {
  doseCm2: number;
  projectedRangeUm: number;
  straggleUm: number;
  lateralStraggleUm: number;
}

/** An implant of the test dopant through the windows, then the given anneal steps. */
export function implantRecipe(o: CaseOptions & { implant: ImplantOptions; anneals: Record<string, unknown>[] }) {
  return {
    ...caseRecipe(o, 'test: implant then anneal (invented)'),
    steps: [{ kind: 'implant', dopant: 'Q', ...o.implant }, ...o.anneals.map((a) => ({ kind: 'anneal', ...a }))],
  };
}
