import { diffusivityAt, intrinsicDiffusivity } from './dopants.ts';
import { keepLayout, packedMap } from './layouts.ts';
import { finestX, finestZ } from './mesh.ts';
import { RecipeError } from './recipe-terms.ts';
import { integrate, temperatureAt, type Plan, type SpeciesPlan, type StepPlan } from './plan.ts';
import { clockTimes, effectiveBudgetUm2 } from './point-defect-enhancement.ts';
import { geometricSteps } from './schedule.ts';
import { surfaceElectronsCm3, tailDiffusivityCm2PerS } from './phosphorus-kink.ts';
import { concentrationFromDose, diffusivityToSolver } from './units.ts';

/*
 * The step clock: how each process step is cut into time steps. Steps grow geometrically in
 * thermal budget from a first step set by the mesh or by the profile's age, held to what
 * Peaceman–Rachford tolerates where D depends on concentration, with a split-implicit
 * lead-in and start-up steps after a discontinuity.
 */

/**
 * First step of each step that starts a source: ν₀ = D·Δt₀ equal to a quarter of the finest
 * cell squared, so the modes a discontinuity excites are resolved in time before the steps grow.
 */
const FIRST_STEP_MESH_NUMBER = 0.25;

/**
 * Where D depends strongly on concentration (the peak, as it is at each step, diffuses
 * s > 1.5 times faster than intrinsic), steps grow by at most 1 + 0.4/√s: Peaceman–Rachford
 * with variable, non-commuting coefficients is not unconditionally stable. Measured on D ∝ C fronts: at
 * s ≈ 140 (Cs/ni ≈ 70) growth 1.035 was stable with xj within 0.1 % of the step-converged
 * value, 1.07 was 1.6 % off and 1.14 diverged; at s ≈ 560 the same accuracy took 1.0175.
 */
const NONLINEAR_SPEEDUP = 1.5;
/**
 * The lead-in of a nonlinear step: its first steps grow from ν = h²/4 at the peak until
 * ν = min(8, 120·(g − 1))·h², by 1 + 10·(g − 1) a step for the step growth g, at most
 * doubling. Both shrink with g, so every step shrinks as g → 1 and results converge (a
 * fixed end would leave Peaceman–Rachford steps of several h² at any g: 0.3 % in the
 * lateral reach of the benchmark's boron case). Backward Euler in each direction damps what
 * the fast growth leaves in the stiff modes. The end was measured against step-converged
 * solves of the boron benchmark case, a D ∝ C front and the examples: ending at 8·h² took
 * 9–18 % fewer steps than at 4·h² with xj and lateral reach as close or closer (within
 * 0.53 %); at 16·h² the lateral reach moved 0.3–0.4 % off, at 64·h² up to 1.4 %. The lead-in
 * takes at most half the step's budget.
 */
const LEAD_GROWTH = 2;
const LEAD_RATIO = 10;
const LEAD_MESH_NUMBER = 8;
const LEAD_RATIO_MESH = 120;
const LEAD_SHARE = 0.5;
/**
 * …and at most 2 % of the budget from the step's start to the end of the recipe. The
 * lead-in's fast-growing first-order steps, and the steps just after it whose Δβ/β is still
 * far above g − 1, leave an error that later diffusion forgets as the profile keeps growing;
 * in a recipe's last heat nothing comes after to forget it. On charged-defect boron
 * predepositions at 950–1100 °C with Cs from 3e18 to 3e19 cm⁻³, xj from the default steps
 * against step-converged ones (growth 1.003): 0.56–1.71 % → 0.16–0.66 %, the worst lateral
 * reach (a film, then a drive-in ramped down 1200 → 700 °C) 2.1 % → 0.64 %, at 35–37 time steps
 * instead of 20–32; a lead-in followed by a long drive-in (the examples) is not shortened.
 */
const LEAD_SHARE_OF_REST = 0.02;

/** Not below 1.01, which bounds a step at about 700 time steps whatever the speed-up. */
function nonlinearGrowth(speedup: number): number {
  return Math.max(1.01, 1 + 0.4 / Math.sqrt(speedup));
}

/** One time step: its interval within the process step and the temperature at its middle. */
interface TimeStep {
  t0: number;
  t1: number;
  implicit: boolean;
}

/** Growth of successive time steps for a peak speed-up over intrinsic (see NONLINEAR_SPEEDUP). */
function growthFor(plan: Plan, speedup: number): number {
  return speedup > NONLINEAR_SPEEDUP ? Math.min(plan.numerics.stepGrowth, nonlinearGrowth(speedup)) : plan.numerics.stepGrowth;
}

/**
 * Time steps for one process step, geometric in the thermal budget of its fastest species
 * (for a ramp, D changes by orders of magnitude; in budget the profile grows as it would
 * at a fixed temperature). A step that starts a source begins at the mesh's own scale; a
 * drive-in continues a profile whose age in budget is what came since its latest source, and
 * its sequence starts at (growth − 1)·age, keeping Δβ/β as if the profile had grown here from
 * the start. An implant gives its profile an age of its own: a Gaussian of straggle σ (the
 * smaller of depth and lateral) is what diffusion from a point makes in ν = σ²/2, which at a
 * peak that diffuses s times faster than intrinsic is σ²/(2s) of the budget counted here. On
 * the arsenic example with constant D that takes 23 time steps instead of 61, with xj and the
 * lateral reach 0.04 % from the step-converged values (0.01 % with the first step at the
 * mesh's scale); with the charged-defect model 86 instead of 91, as close as before
 * (test/reference/anneal-after-sources.test.ts checks it against the exact solution).
 *
 * Where D depends on concentration, the growth follows the peak as it falls: `next` takes
 * the speed-up at the current peak, and each step grows by what that speed-up allows (an
 * implant or film spreads during its anneal, and its peak with it). The first step and the
 * lead-in are set by the speed-up the clock starts with, which is the largest the step can
 * see; later speed-ups are no larger, so a step never takes more time steps than
 * `count()` says, and the work limit is checked on that count. Elsewhere the
 * sequence is fixed (`geometricSteps`, which lands on the duration with a ratio at most the
 * growth).
 */
export class StepClock {
  private readonly total: number;
  private readonly fixed: Float64Array | null;
  private readonly lead: number[] = [];
  private readonly implicitCount: number;
  private readonly timeAt: (beta: number) => number;
  private readonly seconds: number;
  /** increments issued, budget used, the last increment, the time reached */
  private k = 0;
  private used = 0;
  private last = 0;
  private t = 0;
  private first: number;

  constructor(private readonly plan: Plan, st: StepPlan, hFine: number, present: readonly SpeciesPlan[],
              ages: ProfileAges, private readonly speedup: number, continues: boolean, onward: readonly StepPlan[]) {
    this.seconds = st.seconds;
    this.total = 0;
    this.fixed = new Float64Array(0);
    this.implicitCount = 0;
    this.first = 0;
    this.timeAt = () => st.seconds;
    if (!(st.seconds > 0) || present.length === 0) return;
    const reference = present.reduce((a, b) => ((st.budgetUm2[b.name] ?? 0) > (st.budgetUm2[a.name] ?? 0) ? b : a));
    const total = st.budgetUm2[reference.name] ?? 0;
    if (!(total > 0)) {
      // No budget to grow in: one step over the whole duration.
      this.fixed = Float64Array.of(0);
      this.implicitCount = plan.numerics.startupSteps > 0 ? 1 : 0;
      return;
    }
    this.total = total;
    const growth = growthFor(plan, speedup);
    let first = (FIRST_STEP_MESH_NUMBER * hFine * hFine) / speedup;
    if (isSealed(st)) {
      const inBudget = present.map((s) => ((ages.budgetSince[s.name] + ages.sourceNu[s.name] / speedup) * total) / Math.max(st.budgetUm2[s.name] ?? 0, 1e-300));
      first = Math.max(first, (growth - 1) * Math.min(...inBudget));
    }
    // Where D depends on C, the first steps are held small at the peak D; they then grow
    // fast, split-implicit (L-stable), until ν at the peak reaches a few h², and the geometric
    // sequence (with its start-up steps) carries on from there.
    let used = 0;
    if (speedup > NONLINEAR_SPEEDUP) {
      const target = (Math.min(LEAD_MESH_NUMBER, LEAD_RATIO_MESH * (growth - 1)) * hFine * hFine) / speedup;
      const leadGrowth = Math.min(LEAD_GROWTH, 1 + LEAD_RATIO * (growth - 1));
      const rest = onward.reduce((sum, x) => sum + (x.budgetUm2[reference.name] ?? 0), 0);
      const limit = Math.min(LEAD_SHARE * total, LEAD_SHARE_OF_REST * rest);
      while (first < target && used + first < limit) {
        this.lead.push(first);
        used += first;
        first *= leadGrowth;
      }
    }
    this.first = first;
    this.fixed = speedup > NONLINEAR_SPEEDUP ? null : geometricSteps(total - used, first, growth);
    this.implicitCount = this.lead.length + (continues ? 0 : plan.numerics.startupSteps);
    // Budget → time: cumulative budget of the reference species at the ends of many pieces,
    // each by one five-point Gauss rule: across 1/256 of the widest ramp (800 K) D changes by
    // under 10 %, and the rule integrates an exponential that flat to rounding.
    // A step with TED or OED tabulates its own budget, enhancement included, on 256 pieces
    // (TED's half of them geometric in time, see clockTimes), scaled to end on the step's total.
    const enhanced = total !== st.intrinsicBudgetUm2[reference.name];
    const pieces = enhanced || st.startC !== st.endC ? 256 : 1;
    const times = enhanced && st.poolPerCm > 0 ? clockTimes(st, pieces) : new Float64Array(pieces + 1);
    const cumulative = new Float64Array(pieces + 1);
    const diffusivity = (t: number) => intrinsicDiffusivity(reference.dopant, temperatureAt(st, t));
    for (let p = 1; p <= pieces; p++) {
      if (!(enhanced && st.poolPerCm > 0)) times[p] = (st.seconds * p) / pieces;
      const plain = integrate(diffusivity, times[p - 1], times[p]);
      cumulative[p] = cumulative[p - 1] +
        (enhanced ? effectiveBudgetUm2(st, reference.name, reference.dopant, plain, times[p - 1], times[p], plan.physics) : plain);
    }
    if (enhanced) for (let p = 1; p <= pieces; p++) cumulative[p] *= total / cumulative[pieces];
    this.timeAt = (beta: number) => {
      let p = 0;
      while (p + 1 < pieces && cumulative[p + 1] < beta) p++;
      const f = (beta - cumulative[p]) / (cumulative[p + 1] - cumulative[p]);
      return Math.min(st.seconds, times[p] + Math.max(0, Math.min(1, f)) * (times[p + 1] - times[p]));
    };
  }

  /**
   * Time steps the clock gives if the speed-up stays where it started (an upper bound), then
   * back to the start, so that the same clock runs the step.
   */
  count(): number {
    let n = 0;
    while (this.next(Infinity)) n++;
    this.k = this.used = this.last = this.t = 0;
    return n;
  }

  /** The next time step at the current peak speed-up (at most the starting one), or null at the end. */
  next(speedup: number): TimeStep | null {
    while (this.t < this.seconds) {
      const k = this.k++;
      let end: number;
      if (this.fixed) {
        if (k >= this.fixed.length) return null;
        end = k === this.fixed.length - 1 ? this.seconds : this.timeAt((this.used += this.fixed[k]));
      } else {
        let increment: number;
        let landing = false;
        if (k < this.lead.length) {
          increment = this.lead[k];
        } else {
          const growth = growthFor(this.plan, Math.min(speedup, this.speedup));
          increment = k === this.lead.length ? this.first : this.last * growth;
          const rest = this.total - this.used;
          // Land on the duration: the rest in one step, or in two equal ones where one more
          // step of this size would leave less than a step's growth.
          if (increment >= rest) landing = true;
          else if (increment * (1 + growth) > rest) increment = rest / 2;
        }
        this.last = increment;
        this.used += increment;
        end = landing ? this.seconds : this.timeAt(this.used);
      }
      if (end > this.t) {
        const step = { t0: this.t, t1: end, implicit: k < this.implicitCount };
        this.t = end;
        return step;
      }
    }
    return null;
  }

  /** True once the last time step has been given. */
  get finished(): boolean {
    return this.t >= this.seconds;
  }
}

/** A drive-in or anneal: no dopant enters and the surface is sealed. */
export function isSealed(st: StepPlan): boolean {
  return st.kind === 'drive-in' || st.kind === 'anneal';
}

/**
 * Each species' profile age (see StepClock), as a step begins: the intrinsic thermal budget
 * since its latest source (µm²), and the age that source gave it in ν (µm²: an implant's
 * σ²/2, 0 for a layer or a held surface).
 */
export interface ProfileAges {
  budgetSince: Record<string, number>;
  sourceNu: Record<string, number>;
}

/**
 * How much faster than intrinsic a species can diffuse at its peak concentration during a
 * step (charged-defect model), to start that step's time steps small enough.
 */
export function speedupOf(st: StepPlan, present: readonly SpeciesPlan[], peaks: Record<string, number>): number {
  let speedup = 1;
  if (st.startC === null) return speedup;
  for (const s of present) {
    if (s.model !== 'charged-defect') continue;
    const t = Math.max(st.startC, st.endC!);
    const signed = s.type === 'donor' ? peaks[s.name] : -peaks[s.name];
    const intrinsic = intrinsicDiffusivity(s.dopant, t);
    speedup = Math.max(speedup, diffusivityAt(s.dopant, t, signed, s.fieldEnhancement) / intrinsic);
    // The Fair–Tsai tail can outrun the surface region: size the steps for it too.
    const tail = s.kink ? tailDiffusivityCm2PerS(s.dopant, t, surfaceElectronsCm3(peaks[s.name])) : null;
    if (tail !== null) speedup = Math.max(speedup, diffusivityToSolver(tail) / intrinsic);
  }
  return speedup;
}

/** Largest source concentration each species reaches, cm^-3 (for step sizing only). */
export function sourcePeaks(plan: Plan): Record<string, number> {
  const peaks: Record<string, number> = {};
  for (const st of plan.steps) {
    if (!st.dopant) continue;
    let peak = st.surfaceConcentrationCm3 ?? 0;
    if (st.surfaceAtSolubility) {
      const sp = plan.species.find((s) => s.name === st.dopant)!;
      peak = Math.max(sp.solubility(st.startC!) as number, sp.solubility(st.endC!) as number);
    }
    if (st.implant) peak = concentrationFromDose(st.implant.doseCm2, Math.sqrt(2 * Math.PI) * st.implant.straggleUm);
    if (st.kind === 'film' && st.doseCm2 !== null) {
      // The placed layer is one cell thick only for an instant; what sets D for most of the
      // next heat is its Gaussian surface value Q/√(π·∫D dt) over that heat.
      const next = plan.steps.find((x) => x.index >= st.index && x.seconds > 0);
      const budget = next ? next.budgetUm2[st.dopant] ?? 0 : 0;
      peak = concentrationFromDose(st.doseCm2, budget > 0 ? Math.sqrt(Math.PI * budget) : plan.mesh.dzVolume[0]);
    }
    peaks[st.dopant] = Math.max(peaks[st.dopant] ?? 0, peak);
  }
  return peaks;
}

export interface PlannedClock {
  clock: StepClock;
  /** time steps the clock gives at its starting speed-up (an upper bound) */
  count: number;
}

/**
 * Each process step's clock, with the profile ages and start-up rules carried from step to
 * step; `hFine` is the finest mesh spacing (the first step's scale).
 */
export function planClocks(plan: Plan, peaks: Record<string, number>, hFine = Math.min(finestX(plan.mesh), finestZ(plan.mesh))): PlannedClock[] {
  const { species, steps } = plan;
  const introduced = new Set<string>();
  const ages: ProfileAges = { budgetSince: {}, sourceNu: {} };
  // A sealed step (drive-in, anneal) right after a timed sealed step meets no discontinuity:
  // the profile carries on and so does the boundary, so it takes no split-implicit start-up
  // steps (first order: on the arsenic example with constant D, whose anneal follows its ramp,
  // they held xj 0.10 % and the lateral reach 0.11 % from the step-converged values, 0.04 %
  // without; the phosphorus well 0.03 % → 0.01 %, same steps).
  let afterSealed = false;
  // Arrays the time loop reads are pushed, not mapped (see packedMap).
  return packedMap(steps, (st) => {
    if (st.dopant) {
      // A new source of a species starts its profile's age again; where an earlier source
      // has not diffused since (two implants in a row), the younger of the two sets it.
      const fresh = st.implant ? Math.min(st.implant.straggleUm, st.implant.lateralStraggleUm) ** 2 / 2 : 0;
      const undiffused = introduced.has(st.dopant) && ages.budgetSince[st.dopant] === 0;
      ages.sourceNu[st.dopant] = undiffused ? Math.min(ages.sourceNu[st.dopant], fresh) : fresh;
      ages.budgetSince[st.dopant] = 0;
      introduced.add(st.dopant);
    }
    const present = species.filter((s) => introduced.has(s.name));
    const clock = keepLayout(new StepClock(plan, st, hFine, present, ages, speedupOf(st, present, peaks), afterSealed && isSealed(st),
      steps.slice(st.index)));
    // A source step (none is sealed) ends the run of sealed steps even when it takes no time.
    if (st.dopant || st.seconds > 0) afterSealed = isSealed(st);
    for (const s of present) ages.budgetSince[s.name] += st.budgetUm2[s.name] ?? 0;
    return { clock, count: clock.count() };
  });
}

/** Refuses a recipe whose time steps × mesh points exceed the plan's limit, with an estimate of the time. */
export function checkWork(plan: Plan, total: number, cells: number): void {
  const work = total * cells;
  if (work <= plan.limits.maxPointSteps) return;
  // A point-step of each species, on one core of the 2-core machine this was measured on at
  // its slower speed: about 9 ns with constant D, 25 ns with the charged-defect model.
  const perPointStep = plan.species.reduce((sum, s) => sum + (s.model === 'charged-defect' ? 25e-9 : 9e-9), 0);
  const seconds = work * perPointStep;
  const time = seconds < 90 ? `${Math.ceil(seconds)} s` : `${Math.ceil(seconds / 60)} min`;
  const sci = (v: number) => v.toExponential(2).replace('e+', 'e');
  throw new RecipeError('numerics', `would take ${total} time steps on ${cells} mesh points (${sci(work)} point-steps, ` +
    `about ${time} on one core), above the limit of ${sci(plan.limits.maxPointSteps)}; ` +
    'lower mesh.refine or raise numerics.stepGrowth, or raise the limit');
}
