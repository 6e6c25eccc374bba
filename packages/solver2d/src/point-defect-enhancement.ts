import { intrinsicDiffusivity } from './dopants.ts';
import { oxidationSpread } from './interstitial-spread.ts';
import { diffusivityFactor, INTERSTITIAL_FRACTION, interstitialTransportPerCmS, OED_DIFFUSION_LENGTH_UM, OED_SPECIES, oedSurfaceExcess, TED_SPECIES,
  tedLifetimeS, tedPoolPerCm } from './interstitials.ts';
import { oxidationRateUmPerS, oxideAfterUm, startingOxideUm, type Ambient } from './oxidation.ts';
import type { Recipe } from './recipe.ts';
import { RecipeError } from './recipe-terms.ts';

/*
 * Transient (TED) and oxidation (OED) enhancement of diffusion over a process step: what each
 * step starts from (the "+1" interstitial pool, the oxide in the windows), and the budgets of
 * a species over any interval of it. The models are in interstitials.ts; here they meet the
 * schedule. The factor D_eff/D is integrated over each interval, never sampled: TED's decays
 * within seconds at 1000 °C, and a time step's ν = ∫D_eff dt takes all of it.
 */

/** The recipe's `physics` switches as they apply to this recipe. */
export interface PhysicsSwitches {
  ted: boolean;
  oxidationEnhanced: boolean;
}

/** The part of a step's plan the enhancement reads. */
export interface EnhancedStep {
  index: number;
  startC: number | null;
  endC: number | null;
  seconds: number;
  ambient: Ambient;
  /** the "+1" pool Σ dose·depth at the step's start, cm⁻¹ (0 with TED off) */
  poolPerCm: number;
  /** oxide in the windows at the step's start, µm */
  oxideUm: number;
}

/**
 * The switches with their defaults (on), refusing one switched on explicitly where it cannot
 * apply: TED without an implant or without B or P; OED without an oxidising step or without
 * B, P or Sb among the species.
 */
export function resolvePhysics(recipe: Recipe, speciesNames: readonly string[]): PhysicsSwitches {
  const asked = recipe.physics ?? {};
  const implants = recipe.steps.some((s) => s.kind === 'implant');
  const oxidising = recipe.steps.some((s) => (s.kind === 'drive-in' || s.kind === 'anneal') && (s.ambient ?? 'inert') !== 'inert');
  if (asked.ted === true) {
    if (!implants) throw new RecipeError('physics.ted', 'is true but the recipe has no implant step (TED follows an implant); remove it or add an implant');
    if (!speciesNames.some((n) => TED_SPECIES.includes(n))) {
      throw new RecipeError('physics.ted', `is true but applies to ${TED_SPECIES.join(' and ')} only (the recipe diffuses ${speciesNames.join(', ')})`);
    }
  }
  if (asked.oxidationEnhanced === true) {
    if (!oxidising) throw new RecipeError('physics.oxidationEnhanced', 'is true but no drive-in or anneal has an ambient of "dry-oxygen" or "steam"');
    if (!speciesNames.some((n) => OED_SPECIES.includes(n))) {
      throw new RecipeError('physics.oxidationEnhanced', `is true but applies to ${OED_SPECIES.join(', ')} only (the recipe diffuses ${speciesNames.join(', ')})`);
    }
  }
  return { ted: asked.ted ?? true, oxidationEnhanced: asked.oxidationEnhanced ?? true };
}

/** Depth that the "+1" interstitials of an implant sit at: its projected range, at least one straggle. */
export function implantDefectDepthUm(projectedRangeUm: number, straggleUm: number): number {
  return Math.max(projectedRangeUm, straggleUm);
}

/** Pieces of a ramp over which T is taken at the middle (the lifetime's 3.8 eV changes 4 % per °C). */
const RAMP_PIECES = 64;

/** ∫ dt/τ(T(t)) over [t0, t1] of a step. */
function drained(st: EnhancedStep, t0: number, t1: number): number {
  if (!(t1 > t0)) return 0;
  if (st.startC === st.endC) return (t1 - t0) / tedLifetimeS(st.startC!);
  const pieces = Math.max(1, Math.ceil((RAMP_PIECES * (t1 - t0)) / st.seconds));
  const h = (t1 - t0) / pieces;
  let sum = 0;
  for (let p = 0; p < pieces; p++) sum += h / tedLifetimeS(temperatureIn(st, t0 + (p + 0.5) * h));
  return sum;
}

function temperatureIn(st: EnhancedStep, t: number): number {
  return st.seconds > 0 ? st.startC! + ((st.endC! - st.startC!) * t) / st.seconds : st.startC!;
}

/** The pool at a time within the step, cm⁻¹. */
export function poolAt(st: EnhancedStep, t: number): number {
  return st.poolPerCm > 0 ? st.poolPerCm * Math.exp(-drained(st, 0, t)) : 0;
}

/**
 * TED's extra budget of a species over [t0, t1], µm²: ∫ f_I·D·(S − 1) dt with
 * S − 1 = M/(τ·D_I·C_I*) and M draining as exp(−∫dt/τ); exact at a fixed temperature
 * (f_I·D·M(t0)/(D_I·C_I*)·(1 − exp(−Δt/τ))), on pieces with T at their middle on a ramp.
 */
export function tedExtraUm2(st: EnhancedStep, name: string, dopant: Parameters<typeof intrinsicDiffusivity>[0], t0: number, t1: number): number {
  if (!(st.poolPerCm > 0) || !TED_SPECIES.includes(name) || !(t1 > t0)) return 0;
  const f = INTERSTITIAL_FRACTION[name];
  let pool = poolAt(st, t0);
  const pieces = st.startC === st.endC ? 1 : Math.max(1, Math.ceil((RAMP_PIECES * (t1 - t0)) / st.seconds));
  const h = (t1 - t0) / pieces;
  let extra = 0;
  for (let p = 0; p < pieces; p++) {
    const T = temperatureIn(st, t0 + (p + 0.5) * h);
    const gone = -Math.expm1(-h / tedLifetimeS(T));
    extra += ((f * intrinsicDiffusivity(dopant, T) * pool) / interstitialTransportPerCmS(T)) * gone;
    pool *= 1 - gone;
  }
  return extra;
}

/** Oxide in the windows at a time within the step, µm (a ramp in pieces, each at its middle temperature). */
export function oxideAt(st: EnhancedStep, t: number): number {
  if (st.ambient === 'inert' || !(t > 0)) return st.oxideUm;
  if (st.startC === st.endC) return oxideAfterUm(st.ambient, st.startC!, t, st.oxideUm);
  const pieces = Math.max(1, Math.ceil((RAMP_PIECES * t) / st.seconds));
  const h = t / pieces;
  let x = st.oxideUm;
  for (let p = 0; p < pieces; p++) x = oxideAfterUm(st.ambient, temperatureIn(st, (p + 0.5) * h), h, x);
  return x;
}

/**
 * Fills each step's pool and oxide at its start, in order: an implant adds dose × depth to
 * the pool (with TED on), a timed step drains it; an oxidising step starts from at least the
 * ambient's initial oxide and grows it by Deal–Grove.
 */
export function planEnhancements(steps: EnhancedStep[], implants: readonly ({ doseCm2: number; projectedRangeUm: number; straggleUm: number } | null)[],
                                 switches: PhysicsSwitches): void {
  let pool = 0;
  let oxide = 0;
  for (const st of steps) {
    const implant = implants[st.index];
    if (switches.ted && implant) pool += implantPool(implant.doseCm2, implant.projectedRangeUm, implant.straggleUm);
    st.poolPerCm = pool;
    st.oxideUm = st.ambient === 'inert' ? oxide : Math.max(oxide, startingOxideUm(st.ambient));
    if (st.seconds > 0 && st.startC !== null) {
      pool = poolAt(st, st.seconds);
      oxide = oxideAt(st, st.seconds);
    }
  }
}

/**
 * Times (s) at which the step clock tabulates a TED step's budget: half spread evenly, half
 * geometrically from a twentieth of the shortest lifetime in the step, so that the map from
 * budget to time follows the decay where it is fast.
 */
export function clockTimes(st: EnhancedStep, pieces: number): Float64Array {
  const out = new Float64Array(pieces + 1);
  const half = pieces >> 1;
  const shortest = tedLifetimeS(Math.max(st.startC!, st.endC!)) / 20;
  const points: number[] = [];
  for (let p = 1; p <= half; p++) points.push((st.seconds * p) / half);
  if (shortest < st.seconds) for (let p = 0; p < pieces - half; p++) points.push(shortest * (st.seconds / shortest) ** (p / (pieces - half)));
  else for (let p = 0; p < pieces - half; p++) points.push((st.seconds * (p + 0.5)) / (pieces - half));
  points.sort((a, b) => a - b);
  for (let p = 0; p < pieces; p++) out[p + 1] = Math.max(out[p], Math.min(st.seconds, points[p]));
  out[pieces] = st.seconds;
  return out;
}

const GAUSS3 = [[-Math.sqrt(0.6), 5 / 9], [0, 8 / 9], [Math.sqrt(0.6), 5 / 9]] as const;

/**
 * The surface excess S_s − 1 of a wide oxidising window over [t0, t1], weighted by the
 * species' D: ∫D·(S_s − 1) dt / ∫D dt (three-point Gauss on each of four pieces; the
 * rate changes as √ of the time at most). 0 in an inert ambient.
 */
export function oedMeanExcess(st: EnhancedStep, dopant: Parameters<typeof intrinsicDiffusivity>[0], t0: number, t1: number): number {
  if (st.ambient === 'inert' || !(t1 > t0)) return 0;
  const pieces = 4;
  const h = (t1 - t0) / pieces;
  let weighted = 0;
  let plain = 0;
  for (let p = 0; p < pieces; p++) {
    for (const [x, w] of GAUSS3) {
      const t = t0 + (p + 0.5 + 0.5 * x) * h;
      const T = temperatureIn(st, t);
      const d = intrinsicDiffusivity(dopant, T) * w;
      weighted += d * oedSurfaceExcess(oxidationRateUmPerS(st.ambient, T, oxideAt(st, t)));
      plain += d;
    }
  }
  return weighted / plain;
}

/** D_eff/D of a species at u = S − 1 (1 for a species OED does not apply to). */
export function oedFactor(name: string, excess: number): number {
  return OED_SPECIES.includes(name) ? diffusivityFactor(INTERSTITIAL_FRACTION[name], 1 + excess) : 1;
}

/**
 * A species' budget over [t0, t1] with the enhancement, for the mesh and the step clock, µm²:
 * intrinsic + TED's extra, times OED's factor where it is largest (a wide window's surface,
 * or 1 where OED retards). `intrinsic` is the plain ∫D dt over the same interval.
 */
export function effectiveBudgetUm2(st: EnhancedStep, name: string, dopant: Parameters<typeof intrinsicDiffusivity>[0],
                                   intrinsic: number, t0: number, t1: number, switches: PhysicsSwitches): number {
  let budget = intrinsic;
  if (switches.ted) budget += tedExtraUm2(st, name, dopant, t0, t1);
  if (switches.oxidationEnhanced && OED_SPECIES.includes(name)) {
    budget *= Math.max(1, oedFactor(name, oedMeanExcess(st, dopant, t0, t1)));
  }
  return budget;
}

/** Pool added by an implant step, cm⁻¹. */
export function implantPool(doseCm2: number, projectedRangeUm: number, straggleUm: number): number {
  return tedPoolPerCm(doseCm2, implantDefectDepthUm(projectedRangeUm, straggleUm));
}

/** One species' enhancement over a process step, for the report: time-averaged D_eff/D. */
export interface StepEnhancementRecord {
  /** TED: ∫D_eff dt / ∫D dt, uniform over the section */
  ted: number;
  /** OED: the same where the interstitial excess is largest (a window's surface); below 1 where it retards */
  oxidation: number;
}

/**
 * The enhancement inside the time loop, for a run: scales each species' component budgets
 * by TED's uniform factor, and makes the per-node ν of OED from the interstitial spread,
 * computed once a run (it depends on the mask and L alone). Buffers sized once.
 */
export class DefectEnhancement {
  /** u/u_s at the nodes, row-major; null until a step oxidises */
  private spread: Float64Array | null = null;
  private spreadPeak = 0;
  private readonly node: Float64Array;
  /** per present species (by index in the step's list): OED's mean surface excess this time step */
  private readonly excess: Float64Array;
  /** per species (by index): ∫D dt, TED's extra and OED's ∫D·factor at the peak over the process step, µm² */
  private readonly plain: Float64Array;
  private readonly withTed: Float64Array;
  private readonly withOxidation: Float64Array;
  /** the largest TED scale of this time step, for the lagged coefficients' extrapolation weight */
  scale = 1;

  constructor(private readonly plan: { physics: PhysicsSwitches; mesh: { x: Float64Array; z: Float64Array; nx: number; nz: number; widthUm: number };
    mask: { windows: readonly (readonly [number, number])[] } }, speciesCount: number) {
    this.node = new Float64Array(plan.mesh.nx * plan.mesh.nz);
    this.excess = new Float64Array(speciesCount);
    this.plain = new Float64Array(speciesCount);
    this.withTed = new Float64Array(speciesCount);
    this.withOxidation = new Float64Array(speciesCount);
  }

  /** Starts a process step's record. */
  begin(): void {
    this.plain.fill(0);
    this.withTed.fill(0);
    this.withOxidation.fill(0);
  }

  /**
   * Scales `budgets[n]` (ν per charge-state term over [t0, t1]) by TED's factor and notes OED's
   * excess for each present species; returns true where some species needs a per-node ν.
   */
  apply(st: EnhancedStep, present: readonly { name: string; dopant: Parameters<typeof intrinsicDiffusivity>[0] }[],
        indices: readonly number[], budgets: { neutral: number; single: number; double: number }[], t0: number, t1: number): boolean {
    const { physics } = this.plan;
    let perNode = false;
    this.scale = 1;
    for (let n = 0; n < present.length; n++) {
      const s = present[n];
      const b = budgets[n];
      const plain = b.neutral + b.single + b.double;
      let scale = 1;
      if (physics.ted && st.poolPerCm > 0 && TED_SPECIES.includes(s.name) && plain > 0) {
        scale = 1 + tedExtraUm2(st, s.name, s.dopant, t0, t1) / plain;
        b.neutral *= scale;
        b.single *= scale;
        b.double *= scale;
        this.scale = Math.max(this.scale, scale);
      }
      let u = 0;
      if (physics.oxidationEnhanced && st.ambient !== 'inert' && OED_SPECIES.includes(s.name)) {
        u = oedMeanExcess(st, s.dopant, t0, t1);
        if (u > 0) {
          perNode = true;
          this.ensureSpread();
        }
      }
      this.excess[n] = u;
      const k = indices[n];
      this.plain[k] += plain;
      this.withTed[k] += plain * scale;
      this.withOxidation[k] += plain * scale * oedFactor(s.name, u * this.spreadPeak);
    }
    return perNode;
  }

  /** OED's excess of the n-th present species this time step (0: no per-node ν needed). */
  excessOf(n: number): number {
    return this.excess[n];
  }

  /** ν at every node from a uniform ν and OED's factor: the stepper's per-node ν for a constant-D species. */
  uniformNodes(nu: number, name: string, n: number): Float64Array {
    oedNodes(this.node, null, nu, this.spread!, this.excess[n], INTERSTITIAL_FRACTION[name]);
    return this.node;
  }

  /** `nu` (a per-node ν) times OED's factor, in place. */
  scaleNodes(nu: Float64Array, name: string, n: number): Float64Array {
    oedNodes(nu, nu, 1, this.spread!, this.excess[n], INTERSTITIAL_FRACTION[name]);
    return nu;
  }

  /** The process step's time-averaged factors of species k (1 where nothing applied). */
  record(k: number): StepEnhancementRecord {
    const plain = this.plain[k];
    return plain > 0 ? { ted: this.withTed[k] / plain, oxidation: this.withOxidation[k] / this.withTed[k] } : { ted: 1, oxidation: 1 };
  }

  private ensureSpread(): void {
    if (this.spread) return;
    const { mesh, mask } = this.plan;
    this.spread = oxidationSpread(mesh.x, mesh.z, mask.windows, mesh.widthUm, OED_DIFFUSION_LENGTH_UM);
    let peak = 0;
    for (let k = 0; k < this.spread.length; k++) peak = Math.max(peak, this.spread[k]);
    this.spreadPeak = peak;
  }
}

/**
 * out[k] = base[k]·(f·S + (1 − f)/S) with S = 1 + excess·spread[k] (base null: the uniform
 * value `nu`); a loop of its own over typed arrays.
 */
function oedNodes(out: Float64Array, base: Float64Array | null, nu: number, spread: Float64Array, excess: number, f: number): void {
  const g = 1 - f;
  if (base) {
    for (let k = 0; k < out.length; k++) {
      const s = 1 + excess * spread[k];
      out[k] = base[k] * (f * s + g / s);
    }
  } else {
    for (let k = 0; k < out.length; k++) {
      const s = 1 + excess * spread[k];
      out[k] = nu * (f * s + g / s);
    }
  }
}
