import { AdiStepper } from './adi.ts';
import type { Plan } from './plan.ts';
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
 * First step of each timed process step: ν₀ = D·Δt₀ equal to a quarter of the finest cell
 * squared, so the modes a discontinuity excites are resolved in time before the steps grow.
 */
const FIRST_STEP_MESH_NUMBER = 0.25;

/**
 * Time steps for every process step. A step that starts a source (a predeposition, a
 * film) begins from a discontinuity and starts at the mesh's own time scale. A drive-in
 * continues a profile that already has an age t₀ = (∫D dt so far)/D: the geometric
 * sequence then starts at (growth − 1)·t₀, keeping Δt/t as it would be had the profile
 * grown at this temperature from the start (the youngest species present decides).
 */
function timeSchedules(plan: Plan, hFine: number): Float64Array[] {
  const { steps, species, numerics } = plan;
  const budget: Record<string, number> = {};
  const introduced = new Set<string>();
  return steps.map((st) => {
    if (st.dopant) introduced.add(st.dopant);
    const active = species.filter((s) => introduced.has(s.name));
    const dMax = Math.max(0, ...active.map((s) => st.diffusivity[s.name]));
    if (!(st.seconds > 0) || dMax === 0) return new Float64Array(0);
    let first = (FIRST_STEP_MESH_NUMBER * hFine * hFine) / dMax;
    if (st.kind === 'drive-in' || st.kind === 'anneal') {
      const age = Math.min(...active.map((s) => (budget[s.name] ?? 0) / st.diffusivity[s.name]));
      if (Number.isFinite(age)) first = Math.max(first, (numerics.stepGrowth - 1) * age);
    }
    for (const s of active) budget[s.name] = (budget[s.name] ?? 0) + st.diffusivity[s.name] * st.seconds;
    return geometricSteps(st.seconds, first, numerics.stepGrowth);
  });
}

/** Runs the recipe's steps in order; each species diffuses with its own D during every timed step. */
export function simulate(plan: Plan, options: SimulateOptions = {}): Simulation {
  const { mesh, mask, species, steps, numerics } = plan;
  const cells = mesh.nx * mesh.nz;
  const stepper = new AdiStepper(mesh, mask);
  const concentration: Record<string, Float64Array> = {};
  const entered: Record<string, number> = {};
  for (const s of species) {
    concentration[s.name] = new Float64Array(cells);
    entered[s.name] = 0;
  }
  const present = new Set<string>();
  let hFine = Infinity;
  for (let i = 0; i < mesh.nx; i++) hFine = Math.min(hFine, mesh.dx[i]);
  for (let j = 1; j < mesh.nz; j++) hFine = Math.min(hFine, mesh.z[j] - mesh.z[j - 1]);

  const schedules = timeSchedules(plan, hFine);
  const total = schedules.reduce((n, s) => n + s.length, 0);
  let done = 0;
  const stepRecords: StepRecord[] = [];

  for (const st of steps) {
    const schedule = schedules[st.index];
    if (st.kind === 'film' && st.dopant && st.doseCm2 !== null) {
      // The dose sits in the surface control volume of each open cell.
      const c = concentration[st.dopant];
      const value = concentrationFromDose(st.doseCm2, mesh.dzVolume[0]);
      for (let i = 0; i < mesh.nx; i++) if (mask.open[i] === 1) c[i] += value;
      for (let i = 0; i < mesh.nx; i++) if (mask.open[i] === 1) entered[st.dopant] += value * mesh.dx[i] * mesh.dzVolume[0];
      present.add(st.dopant);
    }
    const heldSpecies = st.kind === 'predeposition' ? st.dopant : null;
    if (heldSpecies) {
      present.add(heldSpecies);
      entered[heldSpecies] += stepper.holdSurface(concentration[heldSpecies], st.surfaceConcentrationCm3!);
    }
    let seconds = 0;
    for (let k = 0; k < schedule.length; k++) {
      const dt = schedule[k];
      const scheme = k < numerics.startupSteps ? 'split-implicit' : 'peaceman-rachford';
      for (const name of present) {
        const held = name === heldSpecies;
        const c = concentration[name];
        entered[name] += stepper.step(c, st.diffusivity[name] * dt, scheme, held, held ? st.surfaceConcentrationCm3! : 0);
      }
      seconds += dt;
      done++;
      guardFinite(concentration, present, stepper, st.index, seconds);
      options.onProgress?.({ done, total, step: st.index, seconds });
      if (options.shouldStop?.()) throw new StoppedError();
    }
    stepRecords.push({ index: st.index, kind: st.kind, timeSteps: schedule.length, seconds: st.seconds });
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

/** Total open window width, µm: doses are reported per unit of open area. */
export function openWidth(plan: Plan): number {
  let w = 0;
  for (const [x0, x1] of plan.mask.windows) w += x1 - x0;
  return w;
}

/** Stops the run at the first NaN or Inf: a report must never carry one. */
function guardFinite(concentration: Record<string, Float64Array>, present: Set<string>,
                     stepper: AdiStepper, step: number, seconds: number): void {
  for (const name of present) {
    if (!stepper.bottomRowFinite(concentration[name])) {
      throw new SolverError(`the ${name} field stopped being finite in steps[${step}] at ${seconds.toPrecision(4)} s`);
    }
  }
}
