/**
 * Cases with known answers for the error-bar coverage study (every scenario invented): each
 * gives a recipe with the test dopant (constant D, so the closed forms hold) and, per
 * quantity, the exact value or null where only a finer solve can tell (the lateral
 * encroachment of a constant source, which has no closed form).
 */
import { arrheniusUm2PerS, bisect, erfcJunctionDepth, filmField, implantField, type FilmCase, type ImplantCase } from './closed-forms.ts';
import { filmRecipe, implantRecipe, predepositionRecipe, TEST_DOPANT } from './recipes.ts';

export const COVERAGE_NB = 1e16;

/** The quantities a case checks, named as the report's window fields. */
export type CoverageQuantity = 'junctionDepthUm' | 'lateralLeftUm' | 'lateralReachLeftUm' | 'lateralReachDepthLeftUm';

export interface CoverageCase {
  name: string;
  family: 'constant source' | 'film' | 'implant' | 'ramp';
  recipe: Record<string, unknown>;
  /** exact values; null where the case has no such junction (a buried region has no surface lateral) */
  exact: Partial<Record<CoverageQuantity, number | null | undefined>>;
  /** the exact field of the same source in any one window [x0, x1] of a cross-section (width, depth), cm^-3; none for a constant source */
  field?: (x0: number, x1: number, width: number, depth: number) => (x: number, z: number) => number;
  /** quantities that a finer solve must tell */
  fromFinerSolve?: CoverageQuantity[];
}

type Anneal = { temperatureC: number | [number, number]; minutes: number };

/** ∫D dt over the anneals, a ramp by the composite Simpson rule on 4000 intervals (independent of the solver's quadrature). */
export function annealBudget(anneals: readonly Anneal[]): number {
  const d = (t: number) => arrheniusUm2PerS(TEST_DOPANT.D0Cm2PerS, TEST_DOPANT.EaEv, t);
  let total = 0;
  for (const a of anneals) {
    const seconds = a.minutes * 60;
    if (!Array.isArray(a.temperatureC)) { total += d(a.temperatureC) * seconds; continue; }
    const [from, to] = a.temperatureC;
    const n = 4000;
    const at = (k: number) => d(from + ((to - from) * k) / n);
    let sum = at(0) + at(n);
    for (let k = 1; k < n; k++) sum += (k % 2 === 1 ? 4 : 2) * at(k);
    total += (sum * seconds) / (3 * n);
  }
  return total;
}

/**
 * Junction depth at the centre, surface lateral, and the reach with its depth, of a separable
 * field K·v(z)·l(x). The widest row of the region is where v(z) is largest: at the surface for
 * a film, near Rp for an implant. A region that does not reach the surface (a deep implant)
 * has no surface lateral, and its junction depth at the centre is its upper junction.
 */
function separableAnswers(field: (x: number, z: number) => number, x0: number, centre: number, depth: number, peakDepth: number) {
  let zStar = 0;
  if (peakDepth > 0) {
    const h = 1e-6;
    const slope = (z: number) => (field(centre, z + h) - field(centre, z - h)) / (2 * h);
    zStar = slope(1e-4) > 0 ? bisect(slope, 1e-4, peakDepth * 1.5) : 0;
  }
  const atSurface = field(centre, 0) > COVERAGE_NB;
  const xj = atSurface ? bisect((z) => field(centre, z) - COVERAGE_NB, Math.max(zStar, 1e-9), depth) : bisect((z) => field(centre, z) - COVERAGE_NB, 0, zStar);
  const lateral = atSurface ? x0 - bisect((x) => field(x, 0) - COVERAGE_NB, 0, x0) : null;
  const reach = x0 - bisect((x) => field(x, zStar) - COVERAGE_NB, 0, x0);
  return { junctionDepthUm: xj, lateralLeftUm: lateral, lateralReachLeftUm: reach, lateralReachDepthLeftUm: zStar };
}

/** Cross-section depth the plan gives a recipe: needed by the closed forms' bottom image. */
export type DepthOf = (recipe: Record<string, unknown>) => number;

export function coverageCases(depthOf: DepthOf): CoverageCase[] {
  const cases: CoverageCase[] = [];
  // Constant source at four Cs/NB, three budgets each: xj at the centre of a window wide enough
  // to be 1D there (erfc, exact); the lateral from a finer solve.
  for (const ratio of [1e2, 1e3, 1e4, 1e5]) {
    for (const [temperatureC, minutes] of [[1000, 30], [1050, 45], [1100, 20]] as const) {
      const dt = arrheniusUm2PerS(TEST_DOPANT.D0Cm2PerS, TEST_DOPANT.EaEv, temperatureC) * minutes * 60;
      const xj = erfcJunctionDepth(ratio * COVERAGE_NB, COVERAGE_NB, dt);
      const half = Math.max(1, Math.ceil(4 * xj));
      const margin = Math.max(1, Math.ceil(2.5 * xj));
      const recipe = predepositionRecipe({ widthUm: 2 * (half + margin), windows: [[margin, margin + 2 * half]], background: COVERAGE_NB, cs: ratio * COVERAGE_NB, temperatureC, minutes });
      cases.push({
        name: `constant source Cs/NB ${ratio.toExponential(0)}, ${temperatureC} °C ${minutes} min`, family: 'constant source', recipe,
        exact: { junctionDepthUm: xj }, fromFinerSolve: ['lateralLeftUm', 'lateralReachLeftUm'],
      });
    }
  }
  // Films in windows of several widths (narrow to wide against the diffusion length).
  const films: [number, number, number][] = [[0.5, 1000, 30], [1, 1000, 30], [2, 1000, 30], [4, 1000, 30], [0.5, 1100, 20], [1, 1100, 20], [2, 1100, 20], [4, 1100, 20], [8, 1100, 20], [1, 1050, 60]];
  for (const [w, temperatureC, minutes] of films) {
    cases.push(filmCase(`film ${w} µm window, ${temperatureC} °C ${minutes} min`, 'film', w, 1e14, [{ temperatureC, minutes }], depthOf));
  }
  // Implants at several depths (Rp = 5 straggles, so all of it is in the silicon), two anneals each.
  for (const rp of [0.05, 0.1, 0.2, 0.4]) {
    for (const anneal of [{ temperatureC: 950, minutes: 20 }, { temperatureC: 1050, minutes: 20 }]) {
      cases.push(implantCase(`implant Rp ${rp} µm, ${anneal.temperatureC} °C ${anneal.minutes} min`, 'implant', rp, 2, [anneal], depthOf));
    }
  }
  cases.push(implantCase('implant Rp 0.15 µm, 1000 °C 20 min', 'implant', 0.15, 1, [{ temperatureC: 1000, minutes: 20 }], depthOf));
  cases.push(implantCase('implant Rp 0.3 µm, 1000 °C 40 min', 'implant', 0.3, 3, [{ temperatureC: 1000, minutes: 40 }], depthOf));
  // Ramps: up, down, and a ramp then a soak, for films and implants.
  const ramps: Anneal[][] = [
    [{ temperatureC: [800, 1100], minutes: 30 }],
    [{ temperatureC: [1100, 900], minutes: 30 }],
    [{ temperatureC: [700, 1050], minutes: 15 }, { temperatureC: 1050, minutes: 20 }],
  ];
  for (const [k, anneals] of ramps.entries()) {
    cases.push(filmCase(`film 2 µm window, ramp ${k + 1}`, 'ramp', 2, 1e14, anneals, depthOf));
    cases.push(implantCase(`implant Rp 0.15 µm, ramp ${k + 1}`, 'ramp', 0.15, 2, anneals, depthOf));
    cases.push(filmCase(`film 0.6 µm window, ramp ${k + 1}`, 'ramp', 0.6, 3e14, anneals, depthOf));
  }
  return cases;
}

function filmCase(name: string, family: CoverageCase['family'], w: number, dose: number, anneals: Anneal[], depthOf: DepthOf): CoverageCase {
  const dt = annealBudget(anneals);
  const margin = Math.max(1.5, Math.ceil(8 * Math.sqrt(dt) * 2) / 2);
  const x0 = margin;
  const x1 = margin + w;
  const width = 2 * margin + w;
  const recipe = {
    ...filmRecipe({ widthUm: width, windows: [[x0, x1]], background: COVERAGE_NB, dose, temperatureC: 1000, minutes: 1 }),
    steps: [{ kind: 'film', dopant: 'Q', doseCm2: dose }, ...anneals.map((a) => ({ kind: 'drive-in', ...a }))],
  };
  const c: FilmCase = { q: dose, dt, x0, x1, width, depth: depthOf(recipe) };
  const field = (a: number, b: number, wide: number, deep: number) => (x: number, z: number) => filmField({ ...c, x0: a, x1: b, width: wide, depth: deep }, x, z);
  return { name, family, recipe, field, exact: separableAnswers((x, z) => filmField(c, x, z), x0, 0.5 * (x0 + x1), c.depth, 0) };
}

function implantCase(name: string, family: CoverageCase['family'], rp: number, w: number, anneals: Anneal[], depthOf: DepthOf): CoverageCase {
  const dt = annealBudget(anneals);
  const implant = { doseCm2: 1e14, projectedRangeUm: rp, straggleUm: rp / 5, lateralStraggleUm: rp / 5 };
  const margin = Math.max(1, Math.ceil(2 * (8 * Math.sqrt(dt + 0.5 * implant.straggleUm ** 2))) / 2);
  const x0 = margin;
  const x1 = margin + w;
  const width = 2 * margin + w;
  const recipe = implantRecipe({ widthUm: width, windows: [[x0, x1]], background: COVERAGE_NB, implant, anneals });
  const c: ImplantCase = { q: implant.doseCm2, rp, straggle: implant.straggleUm, lateralStraggle: implant.lateralStraggleUm, dt, x0, x1, width, depth: depthOf(recipe) };
  const field = (a: number, b: number, wide: number, deep: number) => (x: number, z: number) => implantField({ ...c, x0: a, x1: b, width: wide, depth: deep }, x, z);
  return { name, family, recipe, field, exact: separableAnswers((x, z) => implantField(c, x, z), x0, 0.5 * (x0 + x1), c.depth, rp) };
}
