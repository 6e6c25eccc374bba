import erfcinv from '@stdlib/math-base-special-erfcinv';
import { BUILTIN_DOPANTS, intrinsicDiffusivity, type Dopant, type DopantType } from './dopants.ts';
import { buildMask, maskEdges, type Mask, type Window } from './mask.ts';
import { buildMesh, gradedAxis, type Mesh, type SpacingRule } from './mesh.ts';
import { RecipeError, type Recipe, type Step } from './recipe.ts';
import { concentrationFromDose, minutesToSeconds } from './units.ts';

/** One step of the schedule, in solver units. */
export interface StepPlan {
  index: number;
  kind: Step['kind'];
  temperatureC: number | null;
  seconds: number;
  /** the species this step introduces, if any */
  dopant: string | null;
  surfaceConcentrationCm3: number | null;
  doseCm2: number | null;
  /** diffusivity of every species during this step, µm²/s (0 for a step with no time) */
  diffusivity: Record<string, number>;
}

export interface SpeciesPlan {
  name: string;
  type: DopantType;
  dopant: Dopant;
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
  /** ∫D dt per species over the whole recipe, µm² */
  thermalBudgetUm2: Record<string, number>;
  /** the 1D junction-depth estimate the mesh was sized from, µm */
  reachUm: number;
  warnings: string[];
}

export interface PlanLimits {
  /** largest number of mesh points accepted (memory ∝ points) */
  maxMeshPoints: number;
}

export const DEFAULT_LIMITS: PlanLimits = { maxMeshPoints: 4_000_000 };

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
/** Cells per diffusion length of the shortest predeposition, at the surface and the edges. */
const CELLS_PER_SOURCE_LENGTH = 16;
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
      components: { neutral: { D0Cm2PerS: user.D0Cm2PerS, EaEv: user.EaEv } },
    };
  }
  const builtin = BUILTIN_DOPANTS[name];
  if (!builtin) {
    const known = [...Object.keys(BUILTIN_DOPANTS), ...Object.keys(recipe.dopants ?? {})].join(', ');
    throw new RecipeError(field, `unknown dopant ${JSON.stringify(name)} (known: ${known}; add others under "dopants")`);
  }
  return builtin;
}

function checkWindows(windows: readonly Window[], widthUm: number): void {
  windows.forEach(([x0, x1], k) => {
    if (!(x1 > x0)) throw new RecipeError(`mask.windows[${k}]`, `must have x1 > x0: a window needs a positive width (got [${x0}, ${x1}] µm)`);
    if (x1 > widthUm) throw new RecipeError(`mask.windows[${k}]`, `must lie inside the cross-section [0, ${widthUm}] µm (got [${x0}, ${x1}] µm)`);
  });
  const order = windows.map((w, k) => ({ w, k })).sort((a, b) => a.w[0] - b.w[0]);
  for (let m = 1; m < order.length; m++) {
    const prev = order[m - 1];
    const cur = order[m];
    if (cur.w[0] <= prev.w[1]) {
      throw new RecipeError(`mask.windows[${cur.k}]`, `overlaps or touches mask.windows[${prev.k}] ([${cur.w[0]}, ${cur.w[1]}] and [${prev.w[0]}, ${prev.w[1]}] µm); merge them into one window`);
    }
  }
}

function stepSeconds(step: Step): number {
  if (step.kind === 'film') return step.minutes ? minutesToSeconds(step.minutes) : 0;
  return minutesToSeconds(step.minutes);
}

function stepTemperature(step: Step, index: number): number | null {
  if (step.kind === 'film') {
    if (step.minutes !== undefined && step.temperatureC === undefined) {
      throw new RecipeError(`steps[${index}].temperatureC`, 'is required when a film step has minutes: a number from 600 to 1400 °C');
    }
    return step.temperatureC ?? null;
  }
  return step.temperatureC;
}

function scaledRule(rule: SpacingRule, scale: number): SpacingRule {
  return { ...rule, fineUm: rule.fineUm * scale, maxUm: Math.max(rule.maxUm * scale, rule.fineUm * scale) };
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

export function planRecipe(recipe: Recipe, limits: PlanLimits = DEFAULT_LIMITS): Plan {
  const widthUm = recipe.crossSection.widthUm;
  const windows = recipe.mask.windows as Window[];
  checkWindows(windows, widthUm);
  const substrateDopant = resolveDopant(recipe, recipe.substrate.dopant, 'substrate.dopant');
  const warnings: string[] = [];

  const species: SpeciesPlan[] = [];
  const firstStep: Record<string, number> = {};
  recipe.steps.forEach((step, k) => {
    if (step.kind !== 'predeposition' && step.kind !== 'film') return;
    const dopant = resolveDopant(recipe, step.dopant, `steps[${k}].dopant`);
    if (!(step.dopant in firstStep)) {
      firstStep[step.dopant] = k;
      species.push({ name: step.dopant, type: dopant.type, dopant });
    }
  });
  if (species.length === 0) throw new RecipeError('steps', 'introduce no dopant: add a predeposition or film step');

  const steps: StepPlan[] = recipe.steps.map((step, k) => {
    const temperatureC = stepTemperature(step, k);
    const seconds = stepSeconds(step);
    const diffusivity: Record<string, number> = {};
    for (const s of species) diffusivity[s.name] = temperatureC === null ? 0 : intrinsicDiffusivity(s.dopant, temperatureC);
    return {
      index: k, kind: step.kind, temperatureC, seconds,
      dopant: step.kind === 'predeposition' || step.kind === 'film' ? step.dopant : null,
      surfaceConcentrationCm3: step.kind === 'predeposition' ? step.surfaceConcentrationCm3 : null,
      doseCm2: step.kind === 'film' ? step.doseCm2 : null,
      diffusivity,
    };
  });

  const thermalBudgetUm2: Record<string, number> = {};
  for (const s of species) {
    let budget = 0;
    for (const st of steps) if (st.index >= firstStep[s.name]) budget += st.diffusivity[s.name] * st.seconds;
    thermalBudgetUm2[s.name] = budget;
  }
  const maxBudget = Math.max(...Object.values(thermalBudgetUm2));
  if (!(maxBudget > 0)) throw new RecipeError('steps', 'have no time at temperature after the dopant is introduced: add a drive-in');
  const diffusionLength = Math.sqrt(maxBudget);

  // The highest concentration the recipe reaches, to size the mesh from its 1D junction depth.
  const background = recipe.substrate.concentrationCm3;
  let peak = 0;
  for (const st of steps) {
    if (st.surfaceConcentrationCm3 !== null) peak = Math.max(peak, st.surfaceConcentrationCm3);
    if (st.doseCm2 !== null && st.dopant) {
      const spread = Math.sqrt(Math.PI * Math.max(thermalBudgetUm2[st.dopant], 1e-12));
      peak = Math.max(peak, concentrationFromDose(st.doseCm2, spread));
    }
  }
  const ratio = background / Math.max(peak, 1);
  const reachUm = 2 * diffusionLength * (ratio < 0.5 ? erfcinv(ratio) : erfcinv(0.5));
  const autoDepth = Math.max(2 * diffusionLength * erfcinv(Math.min(0.1, BOTTOM_FRACTION * ratio)), 1.25 * reachUm);
  const depthUm = recipe.crossSection.depthUm ?? autoDepth;
  if (recipe.crossSection.depthUm !== undefined && recipe.crossSection.depthUm < autoDepth) {
    warnings.push(`crossSection.depthUm ${recipe.crossSection.depthUm} µm is shallower than the ${autoDepth.toPrecision(3)} µm the profile needs; the bottom wall may change the answer`);
  }

  // The shortest diffusion length of a source step: a brief predeposition before a long
  // drive-in sets the dose in a layer much thinner than the final profile.
  let shortest = Infinity;
  for (const st of steps) {
    if (st.kind === 'predeposition' && st.dopant) shortest = Math.min(shortest, Math.sqrt(st.diffusivity[st.dopant] * st.seconds));
  }
  const m = recipe.mesh ?? {};
  const refine = m.refine ?? 1;
  const fineX = m.edgeSpacingUm ?? reachUm / CELLS_PER_REACH_X / refine;
  const fineZ = m.surfaceSpacingUm ?? reachUm / CELLS_PER_REACH_Z / refine;
  const near = shortest / CELLS_PER_SOURCE_LENGTH / refine;
  let xRule: SpacingRule = {
    fineUm: fineX, fineReachUm: FINE_REACH * reachUm, grade: GRADE,
    maxUm: m.maxSpacingUm ?? Math.max(fineX, reachUm / 2 / refine),
    ...(near < fineX && m.edgeSpacingUm === undefined ? { nearUm: near } : {}),
  };
  let zRule: SpacingRule = {
    fineUm: fineZ, fineReachUm: FINE_REACH * reachUm, grade: GRADE,
    maxUm: m.maxSpacingUm ?? Math.max(fineZ, reachUm / 4 / refine),
    ...(near < fineZ && m.surfaceSpacingUm === undefined ? { nearUm: near } : {}),
  };
  const edges = maskEdges(windows, widthUm);
  const fixed = windows.flat();
  const xAxis = (rule: SpacingRule) => gradedAxis(widthUm, fixed, edges, rule);
  const zAxis = (rule: SpacingRule) => gradedAxis(depthUm, [], [0], rule);
  if (m.columns !== undefined) xRule = ruleForCount(m.columns, (r) => xAxis(r).length - 1, xRule);
  if (m.rows !== undefined) zRule = ruleForCount(m.rows - 1, (r) => zAxis(r).length - 1, zRule);

  // Count before building, so an oversized request fails before any large allocation.
  const xFaces = xAxis(xRule);
  const zNodes = zAxis(zRule);
  const points = (xFaces.length - 1) * zNodes.length;
  if (points > limits.maxMeshPoints) {
    throw new RecipeError('mesh', `would need ${points} mesh points (${xFaces.length - 1} × ${zNodes.length}, about ${Math.ceil((points * 8 * 6) / 2 ** 20)} MiB), above the limit of ${limits.maxMeshPoints}; lower mesh.refine or raise the limit`);
  }
  const mesh = buildMesh(xFaces, zNodes);
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
    thermalBudgetUm2, reachUm, warnings,
  };
}
