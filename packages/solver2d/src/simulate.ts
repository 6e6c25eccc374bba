import { AdiStepper, PRIMING_CALLS, type UniformLines } from './adi.ts';
import { RecipeError } from './recipe-terms.ts';
import { componentsAt, diffusivityAt, intrinsicDiffusivity, type ComponentDiffusivities } from './dopants.ts';
import { addImplant } from './implant.ts';
import { intrinsicCarriersCm3 } from './intrinsic.ts';
import { integrate, temperatureAt, type Plan, type SpeciesPlan, type StepPlan } from './plan.ts';
import { keepLayout } from './layouts.ts';
import { finestX, finestZ } from './mesh.ts';
import { geometricSteps } from './schedule.ts';
import { concentrationFromDose, doseFromConcentrationUm } from './units.ts';

export interface Progress {
  /** time steps done and planned over the whole recipe */
  done: number;
  total: number;
  /** recipe step being run (0-based) */
  step: number;
  /** time within that step, s */
  seconds: number;
}

export interface SimulateOptions {
  onProgress?: (p: Progress) => void;
  /** called between time steps; return true to abandon the run */
  shouldStop?: () => boolean;
}

export interface LedgerEntry {
  /** dose that entered through the windows (predeposition) or was placed there (film), cm^-2 of open window */
  enteredCm2: number;
  /** dose in the silicon at the end, cm^-2 of open window */
  inSiliconCm2: number;
  /** |entered − in silicon| / in silicon */
  relativeImbalance: number;
}

export interface StepRecord {
  index: number;
  kind: string;
  timeSteps: number;
  seconds: number;
}

export interface Simulation {
  plan: Plan;
  /** concentration per species, cm^-3, row-major [z][x] on plan.mesh */
  concentration: Record<string, Float64Array>;
  ledger: Record<string, LedgerEntry>;
  stepRecords: StepRecord[];
}

export class SolverError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'SolverError';
  }
}

export class StoppedError extends Error {
  constructor() {
    super('stopped');
    this.name = 'StoppedError';
  }
}

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

/**
 * Peaceman–Rachford's amplification tends to −1 for the stiffest modes, and where D depends
 * on C (non-commuting, step-to-step changing coefficients) such a mode can grow rather than
 * merely persist: seen where mesh numbers reach 1e5 and more (a cross-section 1e-6 µm deep,
 * every step growing). A value below −RINGING of the species' largest marks it; the next
 * DAMPED_STEPS steps are then split implicit, whose amplification for those modes is near 0.
 */
const RINGING = 1e-6;
const DAMPED_STEPS = 3;

/**
 * Where no dopant has arrived, ν is the background's (substrate doping alone) at every node.
 * A row or column whose ν is within this fraction of it everywhere takes exactly that value,
 * and the stepper solves such lines, and such runs at the ends of the other lines, with shared
 * factors (about half the cost of factorising line by line; see FlatEnds in adi.ts). 1e-6 of
 * D moves a junction by about 5e-7 of its depth, far below the discretisation's own error;
 * ν on a line's faces stays one value seen from both sides, so the step stays exactly
 * conservative.
 */
const UNIFORM_TOLERANCE = 1e-6;

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
class StepClock {
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
    const pieces = st.startC === st.endC ? 1 : 256;
    const times = new Float64Array(pieces + 1);
    const cumulative = new Float64Array(pieces + 1);
    const diffusivity = (t: number) => intrinsicDiffusivity(reference.dopant, temperatureAt(st, t));
    for (let p = 1; p <= pieces; p++) {
      times[p] = (st.seconds * p) / pieces;
      cumulative[p] = cumulative[p - 1] + integrate(diffusivity, times[p - 1], times[p]);
    }
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
function isSealed(st: StepPlan): boolean {
  return st.kind === 'drive-in' || st.kind === 'anneal';
}

/**
 * Each species' profile age (see StepClock), as a step begins: the intrinsic thermal budget
 * since its latest source (µm²), and the age that source gave it in ν (µm²: an implant's
 * σ²/2, 0 for a layer or a held surface).
 */
interface ProfileAges {
  budgetSince: Record<string, number>;
  sourceNu: Record<string, number>;
}

/**
 * How much faster than intrinsic a species can diffuse at its peak concentration during a
 * step (charged-defect model), to start that step's time steps small enough.
 */
function speedupOf(st: StepPlan, present: readonly SpeciesPlan[], peaks: Record<string, number>): number {
  let speedup = 1;
  if (st.startC === null) return speedup;
  for (const s of present) {
    if (s.model !== 'charged-defect') continue;
    const t = Math.max(st.startC, st.endC!);
    const signed = s.type === 'donor' ? peaks[s.name] : -peaks[s.name];
    speedup = Math.max(speedup, diffusivityAt(s.dopant, t, signed, s.fieldEnhancement) / intrinsicDiffusivity(s.dopant, t));
  }
  return speedup;
}

/** Largest source concentration each species reaches, cm^-3 (for step sizing only). */
function sourcePeaks(plan: Plan): Record<string, number> {
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

/** Runs the recipe's steps in order; every species present diffuses during every timed step. */
export function simulate(plan: Plan, options: SimulateOptions = {}): Simulation {
  // The plan holds the mesh, mask, species and steps the loops below read.
  const { mesh, mask, species, steps } = keepLayout(plan, 'plan');
  const cells = mesh.nx * mesh.nz;
  const hFine = Math.min(finestX(mesh), finestZ(mesh));

  // Plan every step's time steps first, so progress knows the total (an upper bound where
  // the steps follow a falling peak; it is brought down as each process step ends).
  const peaks = sourcePeaks(plan);
  const introduced = new Set<string>();
  const ages: ProfileAges = { budgetSince: {}, sourceNu: {} };
  // A sealed step (drive-in, anneal) right after a timed sealed step meets no discontinuity:
  // the profile carries on and so does the boundary, so it takes no split-implicit start-up
  // steps (first order: on the arsenic example with constant D, whose anneal follows its ramp,
  // they held xj 0.10 % and the lateral reach 0.11 % from the step-converged values, 0.04 %
  // without; the phosphorus well 0.03 % → 0.01 %, same steps).
  let afterSealed = false;
  // Arrays the time loop reads are pushed, not mapped (see packedMap).
  const clocks = packedMap(steps, (st) => {
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
  let total = clocks.reduce((n, c) => n + c.count, 0);
  // Check the work before allocating any field.
  const work = total * cells;
  if (work > plan.limits.maxPointSteps) {
    // A point-step of each species, on one core of the 2-core machine this was measured on at
    // its slower speed: about 9 ns with constant D, 25 ns with the charged-defect model.
    const perPointStep = species.reduce((sum, s) => sum + (s.model === 'charged-defect' ? 25e-9 : 9e-9), 0);
    const seconds = work * perPointStep;
    const time = seconds < 90 ? `${Math.ceil(seconds)} s` : `${Math.ceil(seconds / 60)} min`;
    const sci = (v: number) => v.toExponential(2).replace('e+', 'e');
    throw new RecipeError('numerics', `would take ${total} time steps on ${cells} mesh points (${sci(work)} point-steps, ` +
      `about ${time} on one core), above the limit of ${sci(plan.limits.maxPointSteps)}; ` +
      'lower mesh.refine or raise numerics.stepGrowth, or raise the limit');
  }
  const stepper = keepLayout(new AdiStepper(mesh, mask));
  const concentration: Record<string, Float64Array> = {};
  const entered: Record<string, number> = {};
  for (const s of species) {
    concentration[s.name] = new Float64Array(cells);
    entered[s.name] = 0;
  }
  const nonlinear = species.filter((s) => s.model === 'charged-defect');
  const coupled = nonlinear.length > 0 ? keepLayout(new CoupledDiffusivity(plan, cells)) : null;
  let done = 0;
  const stepRecords: StepRecord[] = [];
  const present: SpeciesPlan[] = [];

  for (const st of steps) {
    const { clock } = clocks[st.index];
    const sp = st.dopant ? species.find((s) => s.name === st.dopant)! : null;
    if (sp && !present.includes(sp)) present.push(sp);
    if (sp && st.kind === 'film' && st.doseCm2 !== null) {
      // The dose sits in the surface control volume of each open cell.
      const c = concentration[sp.name];
      const value = concentrationFromDose(st.doseCm2, mesh.dzVolume[0]);
      for (let i = 0; i < mesh.nx; i++) {
        if (mask.open[i] !== 1) continue;
        c[i] += value;
        entered[sp.name] += value * mesh.dx[i] * mesh.dzVolume[0];
      }
    }
    if (sp && st.implant) entered[sp.name] += addImplant(concentration[sp.name], mesh, mask.windows, st.implant);
    const held = st.kind === 'predeposition' ? sp : null;
    coupled?.restart();
    let previousDt = 0;
    let damped = 0;
    let issued = 0;
    for (;;) {
      // The speed-up at the peak the last step began from (the clock keeps to its own start
      // for the first step, and never goes above it).
      const speedup = coupled && issued > 0 ? speedupOf(st, present, coupled.peaks(peaks)) : Infinity;
      const timeStep = clock.next(speedup);
      if (!timeStep) break;
      issued++;
      // The progress total counted this step's time steps at its starting speed-up.
      if (clock.finished) total -= clocks[st.index].count - issued;
      const { t0, t1 } = timeStep;
      const dt = t1 - t0;
      const midC = temperatureAt(st, 0.5 * (t0 + t1));
      let surface = 0;
      if (held) {
        surface = st.surfaceAtSolubility ? (held.solubility(midC) as number) : st.surfaceConcentrationCm3!;
        entered[held.name] += stepper.holdSurface(concentration[held.name], surface);
      }
      // A concentration-dependent D can feed Peaceman–Rachford's undamped stiff modes (see
      // DAMPED_STEPS): where the field has begun to ring, the next steps are split implicit.
      const budgets = packedMap(present, (s) => componentBudgets(st, s, t0, t1));
      if (coupled && coupled.prepare(concentration, present, budgets, midC, previousDt > 0 ? dt / (2 * previousDt) : 0)) damped = DAMPED_STEPS;
      const scheme = timeStep.implicit || damped > 0 ? 'split-implicit' : 'peaceman-rachford';
      if (damped > 0) damped--;
      for (let n = 0; n < present.length; n++) {
        const s = present[n];
        const isHeld = s === held;
        const c = concentration[s.name];
        const nu = budgets[n];
        if (coupled && s.model === 'charged-defect') {
          const node = coupled.nodeBudgets(s, nu);
          entered[s.name] += stepper.stepVariable(c, node, scheme, isHeld, surface, coupled.uniformLines());
        } else {
          entered[s.name] += stepper.step(c, nu.neutral + nu.single + nu.double, scheme, isHeld, surface);
        }
      }
      previousDt = dt;
      done++;
      guardFinite(concentration, present, stepper, st.index, t1);
      options.onProgress?.({ done, total, step: st.index, seconds: t1 });
      if (options.shouldStop?.()) throw new StoppedError();
    }
    stepRecords.push({ index: st.index, kind: st.kind, timeSteps: issued, seconds: st.seconds });
  }

  const ledger: Record<string, LedgerEntry> = {};
  const area = openWidth(plan);
  for (const s of species) {
    const inSilicon = stepper.content(concentration[s.name]);
    ledger[s.name] = {
      enteredCm2: doseFromConcentrationUm(entered[s.name] / area),
      inSiliconCm2: doseFromConcentrationUm(inSilicon / area),
      relativeImbalance: inSilicon > 0 ? Math.abs(entered[s.name] - inSilicon) / inSilicon : 0,
    };
  }
  return { plan, concentration, ledger, stepRecords };
}

/**
 * `items.map(f)`, built by push. An array that Array.prototype.map makes in optimised code
 * has holey elements, one made by the interpreter packed ones: code compiled on the one
 * meets the other with a "wrong map" and is thrown away (simulate, once per sweep worker).
 */
function packedMap<T, U>(items: readonly T[], f: (item: T) => U): U[] {
  const out: U[] = [];
  for (const item of items) out.push(f(item));
  return out;
}

/** ∫ of each charge-state term of D over [t0, t1] within a step, µm². */
function componentBudgets(st: StepPlan, s: SpeciesPlan, t0: number, t1: number): ComponentDiffusivities {
  if (st.startC === st.endC) {
    // At a fixed temperature the integral is the rate times the step.
    const d = componentsAt(s.dopant, st.startC!);
    const dt = t1 - t0;
    return { neutral: d.neutral * dt, single: d.single * dt, double: d.double * dt };
  }
  const f = (part: keyof ComponentDiffusivities) => integrate((t) => componentsAt(s.dopant, temperatureAt(st, t))[part], t0, t1, 2);
  return { neutral: f('neutral'), single: f('single'), double: f('double') };
}

/**
 * Concentration-dependent diffusivity of the charged-defect model over a time step, for
 * every species at once: n/ni from neutrality over all species and the substrate, taken
 * from the field extrapolated to the middle of the step, C + θ·(Cⁿ − Cⁿ⁻¹) with
 * θ = Δtₙ/(2Δtₙ₋₁). Evaluating D at the mid-step state keeps the stepping second order
 * with one solve per step; the first step of a process step has no history and lags (θ = 0).
 */
class CoupledDiffusivity {
  private readonly previous: Record<string, Float64Array> = {};
  private readonly hasPrevious = new Set<string>();
  /** each species' largest value when prepare() last saw it, cm^-3 */
  private readonly highest: Record<string, number> = {};
  private readonly currentPeaks: Record<string, number> = {};
  private readonly net: Float64Array;
  /** ν at the nodes, row-major (both sweeps read it so) */
  private readonly nu: Float64Array;
  private ni = 1;
  /** the species whose ν prepare() already made, if any */
  private fused: SpeciesPlan | null = null;
  /** rows and columns where ν is the background's, as nodeBudgets() last found them */
  private readonly uniform: UniformLines;
  private readonly deviation: Float64Array;
  private uniformCount = 0;

  constructor(private readonly plan: Plan, cells: number) {
    for (const s of plan.species) this.previous[s.name] = new Float64Array(cells);
    this.net = new Float64Array(cells);
    this.nu = new Float64Array(cells);
    const { nx, nz } = plan.mesh;
    this.uniform = { nu: 0, rows: new Uint8Array(nz), columns: new Uint8Array(nx) };
    this.deviation = new Float64Array(nx);
    primeHotLoops();
  }

  restart(): void {
    this.hasPrevious.clear();
  }

  /**
   * Each species' peak as the last prepare() saw it, where below its source peak (one record,
   * rewritten at each call: it is asked for at every time step).
   */
  peaks(sources: Record<string, number>): Record<string, number> {
    const out = this.currentPeaks;
    for (const name in sources) out[name] = sources[name];
    for (const name in this.highest) out[name] = Math.min(out[name] ?? this.highest[name], this.highest[name]);
    return out;
  }

  /**
   * Net doping at the middle of the coming step; remembers Cⁿ. Returns true when some
   * species has begun to ring: a value below −RINGING of its largest (rounding stays near
   * 1e-13 of it; a stiff mode flipping sign each step grows far past that). With one species
   * present, and that one concentration-dependent, its ν is made in the same pass (`budgets`
   * are each present species' term budgets for the step).
   */
  prepare(concentration: Record<string, Float64Array>, present: readonly SpeciesPlan[], budgets: readonly ComponentDiffusivities[],
          temperatureC: number, theta: number): boolean {
    const { net, plan } = this;
    this.ni = intrinsicCarriersCm3(temperatureC);
    this.fused = null;
    const substrate = plan.substrate.type === 'donor' ? plan.substrate.concentrationCm3 : -plan.substrate.concentrationCm3;
    let ringing = false;
    for (let k = 0; k < present.length; k++) {
      const s = present[k];
      const w = this.hasPrevious.has(s.name) ? theta : 0;
      const sign = s.type === 'donor' ? 1 : -1;
      if (present.length === 1 && s.model === 'charged-defect') {
        const b = budgets[k];
        const double = s.type === 'donor' ? b.double : 0;
        const ref = this.background(s, b);
        const limit = UNIFORM_TOLERANCE * ref;
        const reach = backgroundReach(this.backgroundU(s), this.ni, b.neutral, b.single, double, s.fieldEnhancement, ref, limit);
        extrapolatedBudgets(this.nu, concentration[s.name], this.previous[s.name], w, sign, substrate, this.ni,
          b.neutral, b.single, double, s.fieldEnhancement, plan.mesh.nx, ref, limit, reach, this.uniform.rows, this.deviation);
        this.fused = s;
      } else {
        addExtrapolated(net, concentration[s.name], this.previous[s.name], w, sign, k === 0, substrate);
      }
      if (EXTREMES[0] < -RINGING * EXTREMES[1]) ringing = true;
      this.highest[s.name] = EXTREMES[1];
      this.hasPrevious.add(s.name);
    }
    return ringing;
  }

  /**
   * ν = D·τ at every node for one species from its term budgets; lines where it is the
   * background's (see UNIFORM_TOLERANCE) are set to exactly that and marked.
   */
  nodeBudgets(s: SpeciesPlan, b: ComponentDiffusivities): Float64Array {
    const { nx, nz } = this.plan.mesh;
    const { nu, uniform } = this;
    if (this.fused !== s) {
      const sign = s.type === 'donor' ? 1 : -1;
      // An acceptor sees p/ni, which is n/ni with the sign of the net doping turned over.
      const ref = this.background(s, b);
      nodeBudgets(nu, this.net, this.ni, sign, b.neutral, b.single, s.type === 'donor' ? b.double : 0, s.fieldEnhancement,
        nx, ref, UNIFORM_TOLERANCE * ref, uniform.rows, this.deviation);
    }
    this.uniformCount = uniformColumns(nu, nx, nz, uniform.nu, UNIFORM_TOLERANCE * uniform.nu, uniform.rows, uniform.columns, this.deviation);
    return nu;
  }

  /** u (see nodeBudgets) where the substrate alone sets n and p, for one species. */
  private backgroundU(s: SpeciesPlan): number {
    const { substrate } = this.plan;
    return ((substrate.type === 'donor' ? 1 : -1) * (s.type === 'donor' ? 1 : -1) * substrate.concentrationCm3) / (2 * this.ni);
  }

  /** ν there over the coming step; remembered as the uniform lines' value. */
  private background(s: SpeciesPlan, b: ComponentDiffusivities): number {
    this.uniform.nu = budgetAt(this.backgroundU(s), b.neutral, b.single, s.type === 'donor' ? b.double : 0, s.fieldEnhancement);
    return this.uniform.nu;
  }

  /** The lines nodeBudgets() last found uniform, or null where there were none. */
  uniformLines(): UniformLines | null {
    return this.uniformCount > 0 ? this.uniform : null;
  }
}

/** ν at one node from u (see nodeBudgets), for the background's value. */
function budgetAt(u: number, neutral: number, single: number, double: number, field: boolean): number {
  const root = Math.sqrt(u * u + 1);
  const r = u >= 0 ? u + root : 1 / (root - u);
  const h = field && u > 0 ? 1 + u / root : 1;
  return (neutral + single * r + double * r * r) * h;
}

/**
 * The largest concentration (cm^-3) of a lone species at which its ν is within `limit` of
 * the background's `ref` (u = `background` there; u grows by C/2ni): ν grows with u when
 * no term is negative, so every lower concentration is within it too. −1 where a term is
 * negative (no such bound is claimed).
 */
function backgroundReach(background: number, ni: number, neutral: number, single: number, double: number, field: boolean,
                         ref: number, limit: number): number {
  if (neutral < 0 || single < 0 || double < 0) return -1;
  const within = (c: number) => budgetAt(background + c / (2 * ni), neutral, single, double, field) - ref <= limit;
  let high = ni;
  while (within(high) && high < 1e30) high *= 1e3;
  let low = 0;
  for (let k = 0; k < 64; k++) {
    const mid = 0.5 * (low + high);
    if (within(mid)) low = mid;
    else high = mid;
  }
  return low;
}

// The hot loops of CoupledDiffusivity, each a function of its own over typed arrays.

/** The lowest and highest value addExtrapolated saw in C. */
const EXTREMES = new Float64Array(2);

let primed = false;

/**
 * Runs each hot loop below PRIMING_CALLS times over a few values, both signs and with and
 * without the field factor, once per thread, so that the code after each loop has type
 * feedback before the loop is compiled mid-call (see PRIMING_CALLS in adi.ts).
 */
function primeHotLoops(): void {
  if (primed) return;
  primed = true;
  const c = Float64Array.of(1.5e20, 2.5e18, 0.5, -1.5e-3);
  const prev = new Float64Array(c.length);
  const net = new Float64Array(c.length);
  const nu = new Float64Array(c.length);
  const rows = new Uint8Array(2);
  const columns = new Uint8Array(2);
  const deviation = new Float64Array(2);
  for (let r = 0; r < PRIMING_CALLS; r++) {
    const sign = r % 2 === 0 ? 1 : -1;
    const field = r % 4 < 2;
    addExtrapolated(net, c, prev, 0.5, sign, r % 3 === 0, 1.5e15);
    // As a 2 × 2 cross-section, with and without rows and columns at the background.
    const ref = 4.5e-3;
    const limit = (r % 3 === 0 ? 1 : 1e-9) * ref;
    nodeBudgets(nu, net, 7.5e18, sign, 1.5e-3, 2.5e-3, 0.5e-3, field, 2, ref, limit, rows, deviation);
    uniformColumns(nu, 2, 2, ref, limit, rows, columns, deviation);
    extrapolatedBudgets(nu, c, prev, 0.5, sign, 1.5e15, 7.5e18, 1.5e-3, 2.5e-3, 0.5e-3, field, 2, ref, limit, r % 2 === 0 ? 1e19 : -1, rows, deviation);
    uniformColumns(nu, 2, 2, ref, limit, rows, columns, deviation);
  }
}

/**
 * net += sign·max(C + w·(C − C_prev), 0), or with `first` net = base + the same (one pass
 * instead of a fill and an add); then C_prev = C. Leaves C's extremes in EXTREMES.
 */
function addExtrapolated(net: Float64Array, c: Float64Array, prev: Float64Array, w: number, sign: number, first: boolean, base: number): void {
  let lowest = Infinity;
  let highest = -Infinity;
  for (let k = 0; k < c.length; k++) {
    const ck = c[k];
    const mid = ck + w * (ck - prev[k]);
    net[k] = (first ? base : net[k]) + sign * (mid > 0 ? mid : 0);
    prev[k] = ck;
    lowest = ck < lowest ? ck : lowest;
    highest = ck > highest ? ck : highest;
  }
  EXTREMES[0] = lowest;
  EXTREMES[1] = highest;
}

/**
 * ν = (ν⁰ + ν¹·r + ν²·r²)·h at every node, r = n/ni for a donor (sign +1) or p/ni for an
 * acceptor (sign −1), from neutrality: with u = ±N/2ni, r = u + √(u² + 1) (see intrinsic.ts;
 * for u < 0 the reciprocal form 1/(√(u² + 1) − u) keeps the digits). h = 1 + |u|/√(u² + 1)
 * on the species whose type carries the net doping (u > 0), else 1. Row by row (nx nodes):
 * a row whose ν is within `limit` of `ref` everywhere is set to exactly `ref` and marked in
 * `rows`; `deviation` keeps each column's largest |ν − ref| for uniformColumns.
 */
function nodeBudgets(nu: Float64Array, net: Float64Array, ni: number, sign: number, neutral: number, single: number, double: number,
                     field: boolean, nx: number, ref: number, limit: number, rows: Uint8Array, deviation: Float64Array): void {
  const scale = sign / (2 * ni);
  deviation.fill(0);
  for (let j = 0, start = 0; start < net.length; j++, start += nx) {
    let worst = 0;
    for (let k = start, i = 0; i < nx; k++, i++) {
      const u = net[k] * scale;
      const root = Math.sqrt(u * u + 1);
      const r = u >= 0 ? u + root : 1 / (root - u);
      const h = field && u > 0 ? 1 + u / root : 1;
      const v = (neutral + single * r + double * r * r) * h;
      nu[k] = v;
      const d = Math.abs(v - ref);
      worst = Math.max(worst, d);
      deviation[i] = Math.max(deviation[i], d);
    }
    rows[j] = markRow(nu, start, nx, worst, ref, limit);
  }
}

/** 1, with the row set to exactly `ref`, where its largest |ν − ref| is within `limit`; else 0 (a NaN too). */
function markRow(nu: Float64Array, start: number, nx: number, worst: number, ref: number, limit: number): number {
  if (!(worst <= limit)) return 0;
  nu.fill(ref, start, start + nx);
  return 1;
}

/**
 * addExtrapolated and nodeBudgets in one pass over each row, for a single species: the
 * extrapolation C + w·(C − C_prev) (at least 0), C_prev = C and C's extremes in EXTREMES;
 * then ν = `ref`, evaluating nothing, on the nodes before the row's first value beyond
 * `reach` (see backgroundReach) and after its last, and elsewhere ν with net = base +
 * sign·value, as nodeBudgets makes it. The ν lines are nodeBudgets' own, written out again
 * on purpose: as a function of its own called from both loops, ν came back boxed whenever
 * the call was not inlined (1–7 scavenges a solve against 0).
 */
function extrapolatedBudgets(nu: Float64Array, c: Float64Array, prev: Float64Array, w: number, sign: number, base: number, ni: number,
                             neutral: number, single: number, double: number, field: boolean, nx: number, ref: number, limit: number,
                             reach: number, rows: Uint8Array, deviation: Float64Array): void {
  const scale = sign / (2 * ni);
  let lowest = Infinity;
  let highest = -Infinity;
  deviation.fill(0);
  for (let j = 0, start = 0; start < c.length; j++, start += nx) {
    const end = start + nx;
    let top = 0;
    for (let k = start; k < end; k++) {
      const ck = c[k];
      const mid = ck + w * (ck - prev[k]);
      prev[k] = ck;
      lowest = ck < lowest ? ck : lowest;
      highest = ck > highest ? ck : highest;
      const value = mid > 0 ? mid : 0;
      nu[k] = value;
      top = Math.max(top, value);
    }
    if (top <= reach) {
      nu.fill(ref, start, end);
      rows[j] = 1;
      continue;
    }
    // The first and last node beyond the reach: there is one, since the top is (a NaN, which
    // Math.max carries to the top, stops both scans too).
    let first = start;
    while (nu[first] <= reach) first++;
    let last = end - 1;
    while (nu[last] <= reach) last--;
    // Outside [first, last], ν is the background's within the limit: exactly `ref`.
    nu.fill(ref, start, first);
    nu.fill(ref, last + 1, end);
    let worst = 0;
    for (let k = first, i = first - start; k <= last; k++, i++) {
      const u = (base + sign * nu[k]) * scale;
      const root = Math.sqrt(u * u + 1);
      const r = u >= 0 ? u + root : 1 / (root - u);
      const h = field && u > 0 ? 1 + u / root : 1;
      const v = (neutral + single * r + double * r * r) * h;
      nu[k] = v;
      const d = Math.abs(v - ref);
      worst = Math.max(worst, d);
      deviation[i] = Math.max(deviation[i], d);
    }
    rows[j] = markRow(nu, start, nx, worst, ref, limit);
  }
  EXTREMES[0] = lowest;
  EXTREMES[1] = highest;
}

/**
 * After nodeBudgets or extrapolatedBudgets: marks each column whose ν is within `limit` of
 * `ref` at every node and sets it to exactly `ref` (the marked rows already are). Returns
 * the number of rows and columns marked.
 */
function uniformColumns(nu: Float64Array, nx: number, nz: number, ref: number, limit: number,
                        rows: Uint8Array, columns: Uint8Array, deviation: Float64Array): number {
  let count = 0;
  for (let j = 0; j < nz; j++) count += rows[j];
  for (let i = 0; i < nx; i++) {
    const flat = deviation[i] <= limit ? 1 : 0;
    columns[i] = flat;
    count += flat;
    if (flat === 0) continue;
    for (let j = 0; j < nz; j++) if (rows[j] === 0) nu[j * nx + i] = ref;
  }
  return count;
}

/** Total open window width, µm: doses are reported per unit of open area. */
export function openWidth(plan: Plan): number {
  let w = 0;
  for (const [x0, x1] of plan.mask.windows) w += x1 - x0;
  return w;
}

/** Stops the run at the first NaN or Inf: a report must never carry one. */
function guardFinite(concentration: Record<string, Float64Array>, present: readonly SpeciesPlan[],
                     stepper: AdiStepper, step: number, seconds: number): void {
  for (const s of present) {
    if (!stepper.bottomRowFinite(concentration[s.name])) {
      throw new SolverError(`the ${s.name} field stopped being finite in steps[${step}] at ${seconds.toPrecision(4)} s`);
    }
  }
}
