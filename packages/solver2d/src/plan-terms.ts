import type { ActivationLaw } from './activation.ts';
import type { Dopant, DopantType } from './dopants.ts';
import type { ImplantSpec } from './implant.ts';
import type { Ambient } from './oxidation.ts';
import type { Step } from './recipe.ts';
import type { DIFFUSION_MODELS } from './recipe-terms.ts';

/* The parts of a plan that planning, sizing and stepping all read (plan.ts puts them together). */

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
  /**
   * ∫D dt of every species present during this step, µm²: with TED's extra and OED's largest
   * factor where they apply (point-defect-enhancement.ts), so that the mesh and the step clock
   * see how far the dopant really goes; the intrinsic D's alone in `intrinsicBudgetUm2`.
   */
  budgetUm2: Record<string, number>;
  intrinsicBudgetUm2: Record<string, number>;
  /** the gas of a drive-in or anneal ("inert" for every other step) */
  ambient: Ambient;
  /** the "+1" interstitial pool at the step's start, cm⁻¹ (0 with TED off) */
  poolPerCm: number;
  /** oxide in the windows at the step's start, µm */
  oxideUm: number;
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
  /** Fair–Tsai kink and tail (phosphorus-kink.ts) */
  kink: boolean;
  /** the active/inactive split (activation.ts), or null where all of the species is active */
  activation: ActivationLaw | null;
}

export interface Numerics {
  stepGrowth: number;
  startupSteps: number;
}

export interface PlanLimits {
  /** largest number of mesh points accepted (memory ∝ points) */
  maxMeshPoints: number;
  /** largest mesh points × time steps accepted (solve time ∝ it: 5–25 ns each, and species, on one core here) */
  maxPointSteps: number;
}

/** 4e6 points is about 580 MiB at the peak (below); 1e10 point-steps is a few minutes of solving. */
export const DEFAULT_LIMITS: PlanLimits = { maxMeshPoints: 4_000_000, maxPointSteps: 1e10 };


/**
 * Peak resident memory of a run, MiB, as measured (/usr/bin/time -v, fresh processes, one
 * species, --error-solves 0): about 75 MiB of Node and code, plus per mesh point 130 bytes in 2D
 * (fields, stepper scratch, analysis grids, the files' buffers: 62,500 points 78 MiB, 1e6 210,
 * 2e6 353, 4e6 578) and 48 bytes in 3D (the solve's 16 and the analysis's 32: 3.0e6 points on
 * the quarter of examples/corner-square.json, 213 MiB).
 */
export function peakMemoryMiB(points: number, dimensions: 2 | 3): number {
  return 75 + (points * (dimensions === 2 ? 130 : 48)) / 2 ** 20;
}
