import erfcinv from '@stdlib/math-base-special-erfcinv';
import { diffusivityAt } from './dopants.ts';
import { intrinsicCarriersCm3 } from './intrinsic.ts';
import { kinkElectronsCm3, surfaceElectronsCm3, tailDiffusivityCm2PerS } from './phosphorus-kink.ts';
import { buildMask, maskEdges, type Mask, type Window } from './mask.ts';
import { buildMesh, gradedAxis, gradedAxisCells, type Mesh, type SpacingRule } from './mesh.ts';
import { peakMemoryMiB, type PlanLimits, type SpeciesPlan, type StepPlan } from './plan-terms.ts';
import { overStep } from './thermal-budget.ts';
import type { Recipe } from './recipe.ts';
import { RecipeError } from './recipe-terms.ts';
import { buildSpace3d, type Space3d } from './space3d.ts';
import { concentrationFromDose, diffusivityToSolver } from './units.ts';

/*
 * Mesh sizing: how deep the deepest profile reaches (a 1D estimate per source), and the
 * graded axes across and down that resolve it, counted against the limits before building.
 */

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
 * A 3D solve's default density along each axis, as a fraction of the 2D rules': 0.7 gives a
 * third of the points. Measured on a film in a 4 × 6 µm rectangle against the exact
 * separable solution (test/reference/corner-film.test.ts): xj 0.25 %, edge reach 0.44 %,
 * corner reach 0.05 % at 0.7, against 0.12 %, 0.23 % and 0.04 % at the 2D density.
 */
const DENSITY_3D = 0.7;
/** Depth where the profile has fallen to this fraction of the background: the bottom wall. */
const BOTTOM_FRACTION = 1e-3;

/** How deep the profiles reach, and the finer details near the surface and the edges. */
interface ProfileReach {
  /** the 1D junction-depth estimate of the deepest source, µm */
  reachUm: number;
  /** depth where the deepest profile has fallen to BOTTOM_FRACTION of the background, µm */
  depthNeedUm: number;
  near: NearDetail[];
  nearX: NearDetail[];
}

/**
 * Size the mesh from the deepest 1D profile any source makes. Concentration-dependent
 * diffusion is sized with D at the source's peak concentration, where it is fastest;
 * such a profile is box-like with its front near 1.6·√(Ds·t) (Fair 1981).
 */
export function profileReach(steps: StepPlan[], species: SpeciesPlan[], thermalBudgetUm2: Record<string, number>, background: number): ProfileReach {
  const out: ProfileReach = { reachUm: 0, depthNeedUm: 0, near: [], nearX: [] };
  for (const st of steps) {
    if (!st.dopant) continue;
    const sp = species.find((s) => s.name === st.dopant)!;
    out.reachUm = Math.max(out.reachUm, sourceReach(st, sp, steps, thermalBudgetUm2, background, out));
  }
  const { reachUm } = out;
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
  return out;
}

/** One source's 1D reach, µm; raises `out.depthNeedUm` and adds its details. */
function sourceReach(st: StepPlan, sp: SpeciesPlan, steps: StepPlan[], thermalBudgetUm2: Record<string, number>, background: number,
                     out: ProfileReach): number {
  const { near, nearX } = out;
  let depthNeed = out.depthNeedUm;
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
    if (sp.kink) {
      // The Fair–Tsai tail, from the kink near n_e on with D_tail at the source's peak (while
      // the peak lasts: an upper bound).
      const ns = surfaceElectronsCm3(peak);
      const tailBudget = steps.reduce((sum, x) => (x.index < st.index ? sum : sum + overStep(x, (t) => {
        const d = tailDiffusivityCm2PerS(sp.dopant, t, ns);
        return d === null ? 0 : diffusivityToSolver(d);
      })), 0);
      if (tailBudget > 0) {
        const kinkBelow = background / kinkElectronsCm3(Number.isFinite(hottest) ? hottest : 1000);
        reach = Math.max(reach, front + 2 * Math.sqrt(tailBudget) * erfcinv(Math.min(0.5, kinkBelow)));
        depthNeed = Math.max(depthNeed, front + 2 * Math.sqrt(tailBudget) * erfcinv(Math.min(0.1, BOTTOM_FRACTION * kinkBelow)));
      }
    }
  }
  out.depthNeedUm = depthNeed;
  return reach;
}

/**
 * The cross-section mesh and mask: depth (given or sized), graded axes, limits checked before
 * building. With mask.rectangles, the 3D domain too (space3d.ts), x and y both graded by the
 * lateral rule; the cross-section mesh is then its x–z section (the clocks and the sources'
 * sizing read it), and its mask has no windows.
 */
export function sizeMesh(recipe: Recipe, windows: readonly Window[], profile: ProfileReach, limits: PlanLimits, warnings: string[]):
  { mesh: Mesh; mask: Mask; space: Space3d | null } {
  const rectangles = recipe.mask.rectangles ?? null;
  const lengthUm = recipe.crossSection.lengthUm ?? recipe.crossSection.widthUm;
  // The fewest lateral cells apply across the narrower of the plan view's sides.
  const widthUm = rectangles ? Math.min(recipe.crossSection.widthUm, lengthUm) : recipe.crossSection.widthUm;
  const { reachUm, near, nearX } = profile;
  const depthNeed = profile.depthNeedUm;
  const autoDepth = Math.max(depthNeed, 1.25 * reachUm);
  const depthUm = recipe.crossSection.depthUm ?? autoDepth;
  if (recipe.crossSection.depthUm !== undefined && recipe.crossSection.depthUm < autoDepth) {
    warnings.push(`crossSection.depthUm ${recipe.crossSection.depthUm} µm is shallower than the ${autoDepth.toPrecision(3)} µm the profile needs; the bottom wall may change the answer`);
  }

  const m = recipe.mesh ?? {};
  const refine = (m.refine ?? 1) * (rectangles ? DENSITY_3D : 1);
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

  if (rectangles) {
    const zNodes = gradedAxisCells(depthUm, [], [0], zRule) + 1;
    const space = buildSpace3d(rectangles, recipe.crossSection.widthUm, lengthUm, xRule, zNodes, () => zAxis(zRule), limits.maxMeshPoints);
    const mesh = buildMesh(space.mesh.xFaces, space.mesh.z);
    return { mesh, mask: buildMask(mesh, []), space };
  }
  // Count before building, so an oversized request fails before any large allocation.
  const xCells = gradedAxisCells(widthUm, fixed, edges, xRule);
  const zCells = gradedAxisCells(depthUm, [], [0], zRule) + 1;
  const points = xCells * zCells;
  if (points > limits.maxMeshPoints) {
    throw new RecipeError('mesh', `would need ${points} mesh points (${xCells} × ${zCells}, about ${Math.ceil(peakMemoryMiB(points, 2))} MiB at the peak), above the limit of ${limits.maxMeshPoints}; lower mesh.refine or raise the limit`);
  }
  const mesh = buildMesh(xAxis(xRule), zAxis(zRule));
  const mask = buildMask(mesh, windows);

  for (const [x0, x1] of windows) {
    const room = Math.min(x0, widthUm - x1);
    if (room > 0 && room < 1.5 * reachUm) {
      warnings.push(`window [${x0}, ${x1}] µm is ${room.toPrecision(3)} µm from a side wall, less than 1.5× the junction reach ${reachUm.toPrecision(3)} µm; the wall acts as a mirror`);
    }
  }

  return { mesh, mask, space: null };
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

/** The finest detail, with the largest reach among those nearly as fine. */
function finest(details: NearDetail[]): NearDetail | null {
  if (details.length === 0) return null;
  const spacingUm = Math.min(...details.map((d) => d.spacingUm));
  return { spacingUm, reachUm: Math.max(...details.filter((d) => d.spacingUm <= 1.5 * spacingUm).map((d) => d.reachUm)) };
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
    // TED's and OED's enhancement, as a whole step's ratio to the intrinsic budget.
    const intrinsic = st.intrinsicBudgetUm2[sp.name] ?? 0;
    const enhancement = intrinsic > 0 ? (st.budgetUm2[sp.name] ?? intrinsic) / intrinsic : 1;
    budget += enhancement * overStep(st, (t) => diffusivityAt(sp.dopant, t, signed(surface), field));
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
