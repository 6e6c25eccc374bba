import erfcinv from '@stdlib/math-base-special-erfcinv';
import { BUILTIN_DOPANTS, diffusivityAt, intrinsicDiffusivity, type Dopant, type DopantType } from './dopants.ts';
import type { ImplantSpec } from './implant.ts';
import { buildMask, maskEdges, type Mask, type Window } from './mask.ts';
import { buildMesh, gradedAxis, gradedAxisCells, type Mesh, type SpacingRule } from './mesh.ts';
import type { Recipe, Step } from './recipe.ts';
import { DIFFUSION_MODELS, RecipeError } from './recipe-terms.ts';
import { interpolateSolubility, solidSolubilityCm3 } from './solubility.ts';
import { intrinsicCarriersCm3 } from './intrinsic.ts';
import { concentrationFromDose, minutesToSeconds } from './units.ts';

/** One step of the schedule, in solver units. */
export interface StepPlan {
  index: number;
  kind: Step['kind'];
  /** as given: fixed, a ramp [start, end], or null for a step with no heat */
  temperatureC: number | [number, number] | null;
  startC: number | null;
  endC: number | null;
  seconds: number;
  /** the species this step introduces, if any */
  dopant: string | null;
  /** held surface value of a predeposition at a fixed temperature, cm^-3 */
  surfaceConcentrationCm3: number | null;
  /** true when the held value follows the solid solubility at the step's temperature */
  surfaceAtSolubility: boolean;
  doseCm2: number | null;
  implant: ImplantSpec | null;
  /** ∫D dt of every species present during this step (intrinsic D), µm² */
  budgetUm2: Record<string, number>;
}

export type DiffusionModel = (typeof DIFFUSION_MODELS)[number];

export interface SpeciesPlan {
  name: string;
  type: DopantType;
  dopant: Dopant;
  model: DiffusionModel;
  fieldEnhancement: boolean;
  /** solid solubility, cm^-3, at a temperature (°C), or a reason it cannot be given */
  solubility: (temperatureC: number) => number | string;
}

export interface Numerics {
  stepGrowth: number;
  startupSteps: number;
}

export interface Plan {
  recipe: Recipe;
  substrate: { dopant: string; type: DopantType; concentrationCm3: number };
  species: SpeciesPlan[];
  steps: StepPlan[];
  mesh: Mesh;
  mask: Mask;
  numerics: Numerics;
  /** ∫D dt per species over the whole recipe (intrinsic D), µm² */
  thermalBudgetUm2: Record<string, number>;
  /** the 1D junction-depth estimate the mesh was sized from, µm */
  reachUm: number;
  limits: PlanLimits;
  warnings: string[];
}

/** Temperature at a time within a step (linear ramp), °C. */
export function temperatureAt(step: StepPlan, seconds: number): number {
  if (step.startC === null || step.endC === null) throw new Error(`steps[${step.index}] has no temperature`);
  return step.seconds > 0 ? step.startC + ((step.endC - step.startC) * seconds) / step.seconds : step.startC;
}

const GAUSS5 = [
  [0, 128 / 225],
  [-Math.sqrt(5 - 2 * Math.sqrt(10 / 7)) / 3, (322 + 13 * Math.sqrt(70)) / 900],
  [Math.sqrt(5 - 2 * Math.sqrt(10 / 7)) / 3, (322 + 13 * Math.sqrt(70)) / 900],
  [-Math.sqrt(5 + 2 * Math.sqrt(10 / 7)) / 3, (322 - 13 * Math.sqrt(70)) / 900],
  [Math.sqrt(5 + 2 * Math.sqrt(10 / 7)) / 3, (322 - 13 * Math.sqrt(70)) / 900],
] as const;

/** ∫ f over [a, b] by five-point Gauss–Legendre on `pieces` equal parts. */
export function integrate(f: (t: number) => number, a: number, b: number, pieces = 1): number {
  const h = (b - a) / pieces;
  let total = 0;
  for (let p = 0; p < pieces; p++) {
    const mid = a + (p + 0.5) * h;
    for (const [x, w] of GAUSS5) total += w * f(mid + 0.5 * h * x);
  }
  return 0.5 * h * total;
}

/** Pieces for budget quadrature: D changes by e-fold per ~10 °C, so a ramp gets many. */
function budgetPieces(step: StepPlan): number {
  return step.startC === step.endC ? 1 : 64;
}

/** ∫ f(T(t)) dt over the step, for any function of temperature. */
export function overStep(step: StepPlan, f: (temperatureC: number) => number, t0 = 0, t1 = step.seconds): number {
  if (step.startC === null || !(t1 > t0)) return 0;
  return integrate((t) => f(temperatureAt(step, t)), t0, t1, budgetPieces(step));
}

export interface PlanLimits {
  /** largest number of mesh points accepted (memory ∝ points) */
  maxMeshPoints: number;
  /** largest mesh points × time steps accepted (solve time ∝ it: 5–25 ns each, and species, on one core here) */
  maxPointSteps: number;
}

/** 4e6 points is about 250 MiB of fields; 1e10 point-steps is a few minutes of solving. */
export const DEFAULT_LIMITS: PlanLimits = { maxMeshPoints: 4_000_000, maxPointSteps: 1e10 };

/**
 * Default mesh, where R is the 1D junction-depth estimate: spacing R/80 down to 1.3·R below
 * the surface and R/40 across within 1.3·R of every mask edge, growing by 15 % per cell
 * beyond. Measured on the benchmark's reference case (test/bench/solver.bench.ts), both
 * xj and lateral encroachment are set by the depth spacing, hardly by the lateral one;
 * with the default step growth this puts both within 0.3 % of the converged values.
 */
const CELLS_PER_REACH_Z = 80;
const CELLS_PER_REACH_X = 40;
const FINE_REACH = 1.3;
/** Shallowest profile accepted, µm (a tenth of a nanometre: below it nothing has diffused). */
const MIN_REACH_UM = 1e-4;
/** At least this many cells across the section and down it, whatever the spacing rules say. */
const MIN_CELLS_X = 8;
const MIN_CELLS_Z = 8;
/** Cells per diffusion length of a short predeposition, at the surface and the edges. */
const CELLS_PER_SOURCE_LENGTH = 16;
/** A predeposition is short when its ∫D dt is under this fraction of the species' total. */
const SHORT_SOURCE = 0.25;
const GRADE = 0.15;
/**
 * Ratio of successive time steps. Peaceman–Rachford's error in xj goes as (Δt/t)², measured
 * on the reference case at about 0.17 % for 1.07 (and 1 % for 1.2).
 */
export const DEFAULT_STEP_GROWTH = 1.07;
/** Depth where the profile has fallen to this fraction of the background: the bottom wall. */
const BOTTOM_FRACTION = 1e-3;

function resolveDopant(recipe: Recipe, name: string, field: string): Dopant {
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

function solubilityOf(recipe: Recipe, name: string): (temperatureC: number) => number | string {
  const table = recipe.dopants?.[name]?.solubilityCm3;
  if (!table) return (t) => solidSolubilityCm3(name, t);
  const sorted = [...table].sort((a, b) => a[0] - b[0]);
  return (t) => interpolateSolubility(sorted, t);
}

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
  const order = windows.map((w, k) => ({ w, k })).sort((a, b) => a.w[0] - b.w[0]);
  for (let m = 1; m < order.length; m++) {
    const prev = order[m - 1];
    const cur = order[m];
    if (cur.w[0] - prev.w[1] < MIN_FEATURE_UM) {
      throw new RecipeError(`mask.windows[${cur.k}]`, `overlaps, touches or comes within ${MIN_FEATURE_UM} µm of mask.windows[${prev.k}] ([${cur.w[0]}, ${cur.w[1]}] and [${prev.w[0]}, ${prev.w[1]}] µm); merge them into one window`);
    }
  }
}

function stepSeconds(step: Step): number {
  if (step.kind === 'implant') return 0;
  if (step.kind === 'film') return step.minutes ? minutesToSeconds(step.minutes) : 0;
  return minutesToSeconds(step.minutes);
}

function stepTemperature(step: Step, index: number): number | [number, number] | null {
  if (step.kind === 'implant') return null;
  if (step.kind === 'film') {
    if (step.minutes !== undefined && step.temperatureC === undefined) {
      throw new RecipeError(`steps[${index}].temperatureC`, 'is required when a film step has minutes: a number from 600 to 1400 °C or a ramp [start, end]');
    }
    if (step.minutes === undefined && step.temperatureC !== undefined) {
      throw new RecipeError(`steps[${index}].minutes`, 'is required when a film step has a temperature: a number above 0 and up to 1e5 minutes');
    }
    return step.temperatureC ?? null;
  }
  return step.temperatureC;
}

function scaledRule(rule: SpacingRule, scale: number): SpacingRule {
  return {
    ...rule, fineUm: rule.fineUm * scale, maxUm: Math.max(rule.maxUm * scale, rule.fineUm * scale),
    ...(rule.nearUm !== undefined ? { nearUm: rule.nearUm * scale } : {}),
  };
}

/** Scales a rule so that the axis gets about `count` cells (bisection on a log scale). */
function ruleForCount(count: number, cellsOf: (rule: SpacingRule) => number, rule: SpacingRule): SpacingRule {
  let lo = -12;
  let hi = 12;
  for (let k = 0; k < 60; k++) {
    const mid = 0.5 * (lo + hi);
    if (cellsOf(scaledRule(rule, Math.exp(mid))) > count) lo = mid;
    else hi = mid;
  }
  return scaledRule(rule, Math.exp(hi));
}

/** Finer spacing near a feature for a detail that is smaller than the final profile. */
interface NearDetail {
  spacingUm: number;
  reachUm: number;
}

function finest(details: NearDetail[]): NearDetail | null {
  if (details.length === 0) return null;
  const spacingUm = Math.min(...details.map((d) => d.spacingUm));
  return { spacingUm, reachUm: Math.max(...details.filter((d) => d.spacingUm <= 1.5 * spacingUm).map((d) => d.reachUm)) };
}

export function planRecipe(recipe: Recipe, limits: PlanLimits = DEFAULT_LIMITS): Plan {
  const widthUm = recipe.crossSection.widthUm;
  const windows = recipe.mask.windows as Window[];
  checkWindows(windows, widthUm);
  const substrateDopant = resolveDopant(recipe, recipe.substrate.dopant, 'substrate.dopant');
  const warnings: string[] = [];
  const background = recipe.substrate.concentrationCm3;

  const species: SpeciesPlan[] = [];
  const firstStep: Record<string, number> = {};
  const models = recipe.diffusion?.species ?? {};
  recipe.steps.forEach((step, k) => {
    if (step.kind !== 'predeposition' && step.kind !== 'film' && step.kind !== 'implant') return;
    const dopant = resolveDopant(recipe, step.dopant, `steps[${k}].dopant`);
    if (step.dopant in firstStep) return;
    firstStep[step.dopant] = k;
    const charged = dopant.components.single !== undefined || dopant.components.double !== undefined;
    species.push({
      name: step.dopant, type: dopant.type, dopant,
      model: models[step.dopant] ?? recipe.diffusion?.model ?? (charged ? 'charged-defect' : 'intrinsic'),
      fieldEnhancement: recipe.diffusion?.fieldEnhancement ?? true,
      solubility: solubilityOf(recipe, step.dopant),
    });
  });
  if (species.length === 0) throw new RecipeError('steps', 'introduce no dopant: add a predeposition, film or implant step');
  for (const name of Object.keys(models)) {
    if (!(name in firstStep)) throw new RecipeError(`diffusion.species.${name}`, `names a dopant no step introduces (introduced: ${Object.keys(firstStep).join(', ')})`);
  }

  const steps: StepPlan[] = recipe.steps.map((step, k) => {
    const temperatureC = stepTemperature(step, k);
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
    };
  });
  for (const st of steps) {
    for (const s of species) {
      if (st.index < firstStep[s.name]) continue;
      st.budgetUm2[s.name] = overStep(st, (t) => intrinsicDiffusivity(s.dopant, t));
    }
  }

  const thermalBudgetUm2: Record<string, number> = {};
  for (const s of species) thermalBudgetUm2[s.name] = steps.reduce((sum, st) => sum + (st.budgetUm2[s.name] ?? 0), 0);

  // Size the mesh from the deepest 1D profile any source makes. Concentration-dependent
  // diffusion is sized with D at the source's peak concentration, where it is fastest;
  // such a profile is box-like with its front near 1.6·√(Ds·t) (Fair 1981).
  const near: NearDetail[] = [];
  const nearX: NearDetail[] = [];
  let reachUm = 0;
  let depthNeed = 0;
  for (const st of steps) {
    if (!st.dopant) continue;
    const sp = species.find((s) => s.name === st.dopant)!;
    const budget = Math.max(thermalBudgetUm2[sp.name] - sumBefore(steps, st.index, sp.name), 0);
    let peak: number;
    let reach: number;
    let start = 0;
    if (st.kind === 'implant' && st.implant) {
      const { projectedRangeUm: rp, straggleUm: dr, lateralStraggleUm: dl, doseCm2 } = st.implant;
      const sigma = Math.sqrt(dr * dr + 2 * budget);
      peak = concentrationFromDose(doseCm2, Math.sqrt(2 * Math.PI) * dr);
      start = rp;
      reach = rp + sigma * Math.sqrt(2 * Math.log(Math.max(concentrationFromDose(doseCm2, Math.sqrt(2 * Math.PI) * sigma) / background, 2)));
      near.push({ spacingUm: dr / 8, reachUm: rp + 4 * dr });
      nearX.push({ spacingUm: dl / 8, reachUm: 4 * dl });
      depthNeed = Math.max(depthNeed, rp + sigma * Math.sqrt(2 * Math.log(Math.max(peak / (BOTTOM_FRACTION * background), 2))));
    } else {
      peak = st.kind === 'film'
        ? concentrationFromDose(st.doseCm2!, Math.sqrt(Math.PI * Math.max(budget, 1e-12)))
        : st.surfaceConcentrationCm3 ?? Math.max(...[st.startC!, st.endC!].map((t) => sp.solubility(t) as number));
      const ratio = background / Math.max(peak, 1);
      const length = Math.sqrt(budget);
      reach = 2 * length * erfcinv(Math.min(ratio, 0.5));
      depthNeed = Math.max(depthNeed, 2 * length * erfcinv(Math.min(0.1, BOTTOM_FRACTION * ratio)));
      // Only a short predeposition inside a longer recipe needs its own finer layer.
      if (st.kind === 'predeposition' && st.seconds > 0 && st.budgetUm2[sp.name] < SHORT_SOURCE * budget) {
        const own = Math.sqrt(sp.model === 'charged-defect'
          ? overStep(st, (t) => diffusivityAt(sp.dopant, t, sp.type === 'donor' ? peak : -peak, sp.fieldEnhancement))
          : st.budgetUm2[sp.name]);
        near.push({ spacingUm: own / CELLS_PER_SOURCE_LENGTH, reachUm: 2 * own });
        nearX.push({ spacingUm: own / CELLS_PER_SOURCE_LENGTH, reachUm: 2 * own });
      }
    }
    if (sp.model === 'charged-defect') {
      // Box-like front near 1.6·√(∫Ds dt) (Fair 1981), then an intrinsic tail below ni.
      const front = start + 1.6 * Math.sqrt(fastestBudget(sp, steps, st.index, peak, sp.fieldEnhancement));
      const hottest = Math.max(...steps.filter((x) => x.index >= st.index && x.startC !== null).map((x) => Math.max(x.startC!, x.endC!)));
      const below = background / Math.min(peak, Number.isFinite(hottest) ? intrinsicCarriersCm3(hottest) : peak);
      const tail = 2 * Math.sqrt(budget);
      reach = Math.max(reach, front + tail * erfcinv(Math.min(0.5, below)));
      depthNeed = Math.max(depthNeed, front + tail * erfcinv(Math.min(0.1, BOTTOM_FRACTION * below)));
    }
    reachUm = Math.max(reachUm, reach);
  }
  if (!(reachUm > 0)) {
    const budget = Math.max(...Object.values(thermalBudgetUm2));
    if (budget > 0) {
      throw new RecipeError('steps', `move the dopant too little to resolve: ∫D dt = ${budget.toExponential(2)} µm² (a diffusion length of ${Math.sqrt(budget).toExponential(2)} µm); check the dopants' D0Cm2PerS and EaEv and the step times`);
    }
    throw new RecipeError('steps', 'have no time at temperature after the dopant is introduced: add a drive-in');
  }
  if (reachUm < MIN_REACH_UM) {
    throw new RecipeError('steps', `give a profile only ${reachUm.toExponential(2)} µm deep, below the ${MIN_REACH_UM} µm this mesh can resolve; check the dopants' D0Cm2PerS and EaEv, the step times and the implant ranges`);
  }
  const autoDepth = Math.max(depthNeed, 1.25 * reachUm);
  const depthUm = recipe.crossSection.depthUm ?? autoDepth;
  if (recipe.crossSection.depthUm !== undefined && recipe.crossSection.depthUm < autoDepth) {
    warnings.push(`crossSection.depthUm ${recipe.crossSection.depthUm} µm is shallower than the ${autoDepth.toPrecision(3)} µm the profile needs; the bottom wall may change the answer`);
  }

  const m = recipe.mesh ?? {};
  const refine = m.refine ?? 1;
  const fineX = m.edgeSpacingUm ?? reachUm / CELLS_PER_REACH_X / refine;
  const fineZ = m.surfaceSpacingUm ?? reachUm / CELLS_PER_REACH_Z / refine;
  const detailZ = finest(near);
  const detailX = finest(nearX);
  const nearRule = (detail: NearDetail | null, fine: number, given: number | undefined) =>
    detail && given === undefined && detail.spacingUm / refine < fine ? { nearUm: detail.spacingUm / refine, nearReachUm: detail.reachUm } : {};
  let xRule: SpacingRule = {
    fineUm: fineX, fineReachUm: FINE_REACH * reachUm, grade: GRADE,
    maxUm: m.maxSpacingUm ?? Math.max(fineX, reachUm / 2 / refine),
    ...nearRule(detailX, fineX, m.edgeSpacingUm),
  };
  let zRule: SpacingRule = {
    fineUm: fineZ, fineReachUm: FINE_REACH * reachUm, grade: GRADE,
    maxUm: m.maxSpacingUm ?? Math.max(fineZ, reachUm / 4 / refine),
    ...nearRule(detailZ, fineZ, m.surfaceSpacingUm),
  };
  if (zRule.fineUm > depthUm / MIN_CELLS_Z) {
    warnings.push(`the depth spacing ${zRule.fineUm.toPrecision(3)} µm is coarser than the ${depthUm.toPrecision(3)} µm deep cross-section allows; using ${(depthUm / MIN_CELLS_Z).toPrecision(3)} µm`);
  }
  xRule = capRule(xRule, widthUm / MIN_CELLS_X);
  zRule = capRule(zRule, depthUm / MIN_CELLS_Z);
  const edges = maskEdges(windows, widthUm);
  const fixed = windows.flat();
  const xAxis = (rule: SpacingRule) => gradedAxis(widthUm, fixed, edges, rule);
  const zAxis = (rule: SpacingRule) => gradedAxis(depthUm, [], [0], rule);
  if (m.columns !== undefined) xRule = ruleForCount(m.columns, (r) => gradedAxisCells(widthUm, fixed, edges, r), xRule);
  if (m.rows !== undefined) zRule = ruleForCount(m.rows - 1, (r) => gradedAxisCells(depthUm, [], [0], r), zRule);

  // Count before building, so an oversized request fails before any large allocation.
  const xCells = gradedAxisCells(widthUm, fixed, edges, xRule);
  const zCells = gradedAxisCells(depthUm, [], [0], zRule) + 1;
  const points = xCells * zCells;
  if (points > limits.maxMeshPoints) {
    throw new RecipeError('mesh', `would need ${points} mesh points (${xCells} × ${zCells}, about ${Math.ceil((points * 8 * 8) / 2 ** 20)} MiB), above the limit of ${limits.maxMeshPoints}; lower mesh.refine or raise the limit`);
  }
  const mesh = buildMesh(xAxis(xRule), zAxis(zRule));
  const mask = buildMask(mesh, windows);

  for (const [x0, x1] of windows) {
    const room = Math.min(x0, widthUm - x1);
    if (room > 0 && room < 1.5 * reachUm) {
      warnings.push(`window [${x0}, ${x1}] µm is ${room.toPrecision(3)} µm from a side wall, less than 1.5× the junction reach ${reachUm.toPrecision(3)} µm; the wall acts as a mirror`);
    }
  }

  return {
    recipe,
    substrate: { dopant: recipe.substrate.dopant, type: substrateDopant.type, concentrationCm3: background },
    species, steps, mesh, mask,
    numerics: { stepGrowth: recipe.numerics?.stepGrowth ?? DEFAULT_STEP_GROWTH, startupSteps: recipe.numerics?.startupSteps ?? 3 },
    thermalBudgetUm2, reachUm, limits, warnings,
  };
}

function sumBefore(steps: StepPlan[], index: number, name: string): number {
  let sum = 0;
  for (const st of steps) if (st.index < index) sum += st.budgetUm2[name] ?? 0;
  return sum;
}

/**
 * ∫D dt from a source step on with the charged-defect D at the profile's peak: the source
 * value during the source step, then the surface value of the redistributed dose,
 * Q/√(π·∫D dt), as a drive-in lowers it (an estimate for sizing the mesh, not a result).
 */
function fastestBudget(sp: SpeciesPlan, steps: StepPlan[], from: number, peak: number, field: boolean): number {
  const signed = (c: number) => (sp.type === 'donor' ? c : -c);
  const source = steps[from];
  let budget = 0;
  let dose = source.doseCm2 !== null ? concentrationFromDose(source.doseCm2, 1) : 0;
  for (const st of steps) {
    if (st.index < from) continue;
    if (st.index === from && st.kind === 'predeposition') {
      const own = overStep(st, (t) => diffusivityAt(sp.dopant, t, signed(peak), field));
      dose = 2 * peak * Math.sqrt(own / Math.PI);
      budget += own;
      continue;
    }
    const surface = budget > 0 ? Math.min(peak, dose / Math.sqrt(Math.PI * budget)) : peak;
    budget += overStep(st, (t) => diffusivityAt(sp.dopant, t, signed(surface), field));
  }
  return budget;
}

/** No spacing of a rule coarser than `largest`. */
function capRule(rule: SpacingRule, largest: number): SpacingRule {
  return {
    ...rule, fineUm: Math.min(rule.fineUm, largest), maxUm: Math.min(rule.maxUm, largest),
    ...(rule.nearUm !== undefined ? { nearUm: Math.min(rule.nearUm, largest) } : {}),
  };
}
