import { AdiStepper } from './adi.ts';
import { componentBudgets, CoupledDiffusivity, DAMPED_STEPS } from './coupled-diffusivity.ts';
import { RecipeError } from './recipe-terms.ts';
import { addImplant } from './implant.ts';
import { temperatureAt, type Plan, type SpeciesPlan, type StepPlan } from './plan.ts';
import { keepLayout } from './layouts.ts';
import { simulate3d } from './simulate3d.ts';
import { finestX, finestZ } from './mesh.ts';
import { DefectEnhancement, type StepEnhancementRecord } from './point-defect-enhancement.ts';
import { isSealed, sourcePeaks, speedupOf, StepClock, type ProfileAges } from './step-clock.ts';
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
  /** per species where TED or OED acted in this step: its time-averaged factors */
  enhancement: Record<string, StepEnhancementRecord>;
}

export interface Simulation {
  plan: Plan;
  /** concentration per species, cm^-3, row-major [z][x] on plan.mesh */
  concentration: Record<string, Float64Array>;
  /**
   * The active part of each species with an activation law (activation.ts), cm^-3, in
   * equilibrium at the end of the last heat (the state a quench from it leaves); a species
   * not listed is all active.
   */
  active: Record<string, Float64Array>;
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

/** Runs the recipe's steps in order; every species present diffuses during every timed step. */
export function simulate(plan: Plan, options: SimulateOptions = {}): Simulation {
  if (plan.space) return simulate3d(plan, plan.space, options);
  // The plan holds the mesh, mask, species and steps the loops below read.
  const { mesh, mask, species, steps } = keepLayout(plan, 'plan');
  const cells = mesh.nx * mesh.nz;
  // Plan every step's time steps first, so progress knows the total (an upper bound where
  // the steps follow a falling peak; it is brought down as each process step ends).
  const peaks = sourcePeaks(plan);
  const clocks = planClocks(plan, peaks);
  const total = clocks.reduce((n, c) => n + c.count, 0);
  // Check the work before allocating any field.
  checkWork(plan, total, cells);
  const concentration: Record<string, Float64Array> = {};
  const entered: Record<string, number> = {};
  for (const s of species) {
    concentration[s.name] = new Float64Array(cells);
    entered[s.name] = 0;
  }
  const nonlinear = species.filter((s) => s.model === 'charged-defect' || s.activation !== null);
  const run: Run = {
    plan, options, peaks, concentration, entered, done: 0, total, present: [], presentIndex: [],
    stepper: keepLayout(new AdiStepper(mesh, mask)),
    coupled: nonlinear.length > 0 ? keepLayout(new CoupledDiffusivity(plan, cells)) : null,
    enhancement: enhanced(plan) ? new DefectEnhancement(plan, species.length) : null,
  };
  const stepRecords: StepRecord[] = [];
  for (const st of steps) {
    const sp = st.dopant ? species.find((s) => s.name === st.dopant)! : null;
    if (sp && !run.present.includes(sp)) {
      run.present.push(sp);
      run.presentIndex.push(species.indexOf(sp));
    }
    if (sp) placeSource(run, st, sp);
    run.enhancement?.begin();
    const issued = runStep(run, st, clocks[st.index], st.kind === 'predeposition' ? sp : null);
    stepRecords.push({ index: st.index, kind: st.kind, timeSteps: issued, seconds: st.seconds, enhancement: enhancementRecords(run) });
  }
  return { plan, concentration, active: activeParts(plan, concentration), ledger: ledgerOf(run), stepRecords };
}

/** What the phases of one simulate() share: the fields, the stepper and the progress count. */
interface Run {
  plan: Plan;
  options: SimulateOptions;
  /** largest source concentration of each species (step sizing) */
  peaks: Record<string, number>;
  concentration: Record<string, Float64Array>;
  /** atoms that entered each species' field, per µm of cross-section length */
  entered: Record<string, number>;
  /** species introduced so far, in order, and each one's index in plan.species */
  present: SpeciesPlan[];
  presentIndex: number[];
  stepper: AdiStepper;
  coupled: CoupledDiffusivity | null;
  /** TED and OED in the time loop, where some step has them */
  enhancement: DefectEnhancement | null;
  /** time steps done, and the total planned (brought down as steps end early) */
  done: number;
  total: number;
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

/** Places a film's dose or an implant's profile in the open windows (a predeposition's source is its held surface). */
function placeSource(run: Run, st: StepPlan, sp: SpeciesPlan): void {
  const { mesh, mask } = run.plan;
  if (st.kind === 'film' && st.doseCm2 !== null) {
    // The dose sits in the surface control volume of each open cell.
    const c = run.concentration[sp.name];
    const value = concentrationFromDose(st.doseCm2, mesh.dzVolume[0]);
    for (let i = 0; i < mesh.nx; i++) {
      if (mask.open[i] !== 1) continue;
      c[i] += value;
      run.entered[sp.name] += value * mesh.dx[i] * mesh.dzVolume[0];
    }
  }
  if (st.implant) run.entered[sp.name] += addImplant(run.concentration[sp.name], mesh, mask.windows, st.implant);
}

/** Runs one process step's time steps; `held` is the species a predeposition holds at its surface value. Returns the steps taken. */
function runStep(run: Run, st: StepPlan, planned: PlannedClock, held: SpeciesPlan | null): number {
  const { concentration, entered, present, stepper, coupled, options, enhancement } = run;
  const { clock } = planned;
  coupled?.restart();
  let previousDt = 0;
  let damped = 0;
  let issued = 0;
  for (;;) {
    // The speed-up at the peak the last step began from (the clock keeps to its own start
    // for the first step, and never goes above it).
    const speedup = coupled && issued > 0 ? speedupOf(st, present, coupled.peaks(run.peaks)) : Infinity;
    const timeStep = clock.next(speedup);
    if (!timeStep) break;
    issued++;
    // The progress total counted this step's time steps at its starting speed-up.
    if (clock.finished) run.total -= planned.count - issued;
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
    // TED scales each species' budgets; OED asks for ν per node. The lagged coefficients
    // extrapolate over the step's budget, so their weight follows TED's scale with the time.
    const perNode = enhancement !== null && enhancement.apply(st, present, run.presentIndex, budgets, t0, t1);
    const weightDt = enhancement ? dt * enhancement.scale : dt;
    if (coupled && coupled.prepare(concentration, present, budgets, midC, previousDt > 0 ? weightDt / (2 * previousDt) : 0)) damped = DAMPED_STEPS;
    const scheme = timeStep.implicit || damped > 0 ? 'split-implicit' : 'peaceman-rachford';
    if (damped > 0) damped--;
    for (let n = 0; n < present.length; n++) {
      const s = present[n];
      const isHeld = s === held;
      const c = concentration[s.name];
      const nu = budgets[n];
      const oxidising = perNode && enhancement!.excessOf(n) > 0;
      if (coupled && coupled.isVariable(s)) {
        const node = coupled.nodeBudgets(s, nu);
        if (oxidising) entered[s.name] += stepper.stepVariable(c, enhancement!.scaleNodes(node, s.name, n), scheme, isHeld, surface, null);
        else entered[s.name] += stepper.stepVariable(c, node, scheme, isHeld, surface, coupled.uniformLines());
      } else if (oxidising) {
        entered[s.name] += stepper.stepVariable(c, enhancement!.uniformNodes(nu.neutral + nu.single + nu.double, s.name, n), scheme, isHeld, surface, null);
      } else {
        entered[s.name] += stepper.step(c, nu.neutral + nu.single + nu.double, scheme, isHeld, surface);
      }
    }
    previousDt = weightDt;
    run.done++;
    guardFinite(concentration, present, stepper, st.index, t1);
    options.onProgress?.({ done: run.done, total: run.total, step: st.index, seconds: t1 });
    if (options.shouldStop?.()) throw new StoppedError();
  }
  return issued;
}

/**
 * True where TED or OED acts somewhere: some step's budget differs from the intrinsic one, or
 * (OED retarding antimony leaves its largest factor at 1) a step oxidises with OED on.
 */
function enhanced(plan: Plan): boolean {
  for (const st of plan.steps) {
    if (plan.physics.oxidationEnhanced && st.ambient !== 'inert') return true;
    for (const name in st.budgetUm2) if (st.budgetUm2[name] !== st.intrinsicBudgetUm2[name]) return true;
  }
  return false;
}

/** The step's time-averaged TED and OED factors of each species they changed. */
function enhancementRecords(run: Run): Record<string, StepEnhancementRecord> {
  const out: Record<string, StepEnhancementRecord> = {};
  if (!run.enhancement) return out;
  run.plan.species.forEach((s, k) => {
    const r = run.enhancement!.record(k);
    if (r.ted !== 1 || r.oxidation !== 1) out[s.name] = r;
  });
  return out;
}

/** Dose that entered and dose in the silicon, per species, per unit of open window. */
/** The active part of each species with an activation law, at the end of the recipe's last heat. */
export function activeParts(plan: Plan, concentration: Record<string, Float64Array>): Record<string, Float64Array> {
  const out: Record<string, Float64Array> = {};
  let last: number | null = null;
  for (const st of plan.steps) if (st.endC !== null && st.seconds > 0) last = st.endC;
  for (const s of plan.species) {
    if (!s.activation || last === null) continue;
    out[s.name] = CoupledDiffusivity.activeAt(s, concentration[s.name], last, new Float64Array(concentration[s.name].length));
  }
  return out;
}

function ledgerOf(run: Run): Record<string, LedgerEntry> {
  const ledger: Record<string, LedgerEntry> = {};
  const area = openWidth(run.plan);
  for (const s of run.plan.species) {
    const inSilicon = run.stepper.content(run.concentration[s.name]);
    const entered = run.entered[s.name];
    ledger[s.name] = {
      enteredCm2: doseFromConcentrationUm(entered / area),
      inSiliconCm2: doseFromConcentrationUm(inSilicon / area),
      relativeImbalance: inSilicon > 0 ? Math.abs(entered - inSilicon) / inSilicon : 0,
    };
  }
  return ledger;
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
