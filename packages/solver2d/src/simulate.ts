import { AdiStepper } from './adi.ts';
import { activeParts, componentBudgets, CoupledDiffusivity, DAMPED_STEPS } from './coupled-diffusivity.ts';
import { addImplant } from './implant.ts';
import { temperatureAt, type Plan, type SpeciesPlan, type StepPlan } from './plan.ts';
import { keepLayout, packedMap } from './layouts.ts';
import { simulate3d } from './simulate3d.ts';
import { DefectEnhancement, type StepEnhancementRecord } from './point-defect-enhancement.ts';
import { checkWork, planClocks, sourcePeaks, speedupOf, type PlannedClock } from './step-clock.ts';
import { emptyFields, holdSource, SolverError, StoppedError, type LedgerEntry, type SimulateOptions, type Simulation, type StepRecord } from './simulation.ts';
import { concentrationFromDose, doseFromConcentrationUm } from './units.ts';

export { SolverError, StoppedError, type LedgerEntry, type Progress, type SimulateOptions, type Simulation, type StepRecord } from './simulation.ts';

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
  const { concentration, entered } = emptyFields(species, cells);
  const nonlinear = species.filter((s) => s.model === 'charged-defect' || s.activation !== null);
  const run: Run = {
    plan, options, peaks, concentration, entered, done: 0, total, present: [], presentIndex: [],
    // Only the kernels this plan will call are primed (priming.ts): variable D needs a
    // concentration-dependent model or a point-defect model that sets D per node.
    stepper: keepLayout(new AdiStepper(mesh, mask, { variableD: nonlinear.length > 0 || enhanced(plan) })),
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
    const surface = held ? holdSource(st, held, midC, stepper, concentration, entered) : 0;
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
