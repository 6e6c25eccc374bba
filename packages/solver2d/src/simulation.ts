import type { Plan, SpeciesPlan, StepPlan } from './plan.ts';
import type { StepEnhancementRecord } from './point-defect-enhancement.ts';

/* What a solve returns and how it reports progress and failure: shared by the 2D and 3D time loops. */

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


/** A zero field of `cells` values per species, and the atoms that entered each (none yet). */
export function emptyFields(species: readonly SpeciesPlan[], cells: number): { concentration: Record<string, Float64Array>; entered: Record<string, number> } {
  const concentration: Record<string, Float64Array> = {};
  const entered: Record<string, number> = {};
  for (const s of species) {
    concentration[s.name] = new Float64Array(cells);
    entered[s.name] = 0;
  }
  return { concentration, entered };
}

/**
 * A predeposition's held surface for the coming time step: its value at the step's middle
 * temperature (the solubility there, or the value given), set in the open surface cells of
 * `held`'s field; the atoms that adds count as entered. Returns the value, cm^-3.
 */
export function holdSource(st: StepPlan, held: SpeciesPlan, midC: number, stepper: { holdSurface(c: Float64Array, value: number): number },
                           concentration: Record<string, Float64Array>, entered: Record<string, number>): number {
  const surface = st.surfaceAtSolubility ? (held.solubility(midC) as number) : st.surfaceConcentrationCm3!;
  entered[held.name] += stepper.holdSurface(concentration[held.name], surface);
  return surface;
}
