import { FivePointMultigrid } from './multigrid.ts';
import { BOLTZMANN_EV_PER_K } from './units.ts';

/**
 * The nonlinear Poisson equation of a reverse-biased junction at room temperature:
 *   −∇·(ε∇ψ) = q·(p − n + N),   n = ni·exp((ψ − φn)/Vt),   p = ni·exp((φp − ψ)/Vt),
 * with N = N_D − N_A the net doping, every dopant ionised (at 300 K in silicon the shallow
 * donors and acceptors are, up to far above any doping where breakdown matters).
 *
 * No current flows under reverse bias (generation is neglected), so each carrier keeps a
 * quasi-Fermi level that is flat through the depletion region: the carrier of the biased
 * region's type has its level at sign·V (sign +1: an n region raised by V; −1: a p region
 * lowered by V) everywhere except in other regions of that type, which stay at 0; the other
 * carrier has its level at 0 everywhere. The minority carriers in the depletion region then
 * stay below ni, as they do in a reverse-biased junction (Sze & Ng (2007) ch. 2).
 *
 * Finite volumes on a tensor mesh of nodes: five-point stencil, control volumes bounded by
 * the midpoints between nodes and by the walls. Zero normal field on the side walls and on
 * the surface away from the contacts (mirror walls; the oxide holds no charge and carries no
 * field into the silicon); ohmic contacts where `contact` is 1, held at the neutral
 * potential ψ = φ + Vt·asinh(N/2ni).
 *
 * Units: ψ in V, lengths in µm, concentrations in cm^-3.
 */

/** Elementary charge, C (SI, exact). */
export const ELEMENTARY_CHARGE_C = 1.602176634e-19;
/** Vacuum permittivity, F/cm (CODATA 2018). */
export const VACUUM_PERMITTIVITY_F_PER_CM = 8.8541878128e-14;
/** Relative permittivity of silicon, 11.7 (the value Baliga's power laws are built on; Sze & Ng (2007) quote 11.9; from memory). */
export const SILICON_RELATIVE_PERMITTIVITY = 11.7;
export const SILICON_PERMITTIVITY_F_PER_CM = SILICON_RELATIVE_PERMITTIVITY * VACUUM_PERMITTIVITY_F_PER_CM;
export const ROOM_TEMPERATURE_K = 300;
/** Thermal voltage kT/q at 300 K, V. */
export const THERMAL_VOLTAGE_V = BOLTZMANN_EV_PER_K * ROOM_TEMPERATURE_K;
/** Intrinsic carrier concentration of silicon at 300 K, cm^-3 (Altermatt et al., J. Appl. Phys. 93 (2003) 1598; Sze & Ng (2007) Appendix; from memory). */
export const INTRINSIC_300K_CM3 = 9.65e9;
/** q/ε in V·µm² per cm^-3 of charge density: the µm² → cm² factor 1e-8 makes −∇²ψ (V/µm²) = KAPPA·ρ. */
export const KAPPA = (ELEMENTARY_CHARGE_C / SILICON_PERMITTIVITY_F_PER_CM) * 1e-8;

/** Exponent bound for the carrier densities, so that a trial potential far off gives large but finite numbers. */
const EXP_LIMIT = 80;

export interface PoissonMesh {
  nx: number;
  nz: number;
  /** node positions, µm */
  x: Float64Array;
  z: Float64Array;
  /** control-volume widths, µm */
  xWidth: Float64Array;
  zWidth: Float64Array;
}

/** Control volumes between midpoints, the first and last reaching the walls at `xLeft`, `xRight` (and z[0], z[nz−1]). */
export function poissonMesh(x: Float64Array, z: Float64Array, xLeft: number, xRight: number): PoissonMesh {
  const nx = x.length;
  const nz = z.length;
  const xWidth = new Float64Array(nx);
  for (let i = 0; i < nx; i++) {
    const lo = i === 0 ? xLeft : 0.5 * (x[i - 1] + x[i]);
    const hi = i === nx - 1 ? xRight : 0.5 * (x[i] + x[i + 1]);
    xWidth[i] = hi - lo;
  }
  const zWidth = new Float64Array(nz);
  for (let j = 0; j < nz; j++) {
    const lo = j === 0 ? z[0] : 0.5 * (z[j - 1] + z[j]);
    const hi = j === nz - 1 ? z[nz - 1] : 0.5 * (z[j] + z[j + 1]);
    zWidth[j] = hi - lo;
  }
  return { nx, nz, x, z, xWidth, zWidth };
}

export interface JunctionProblem {
  mesh: PoissonMesh;
  /** N_D − N_A per node, row-major [z][x], cm^-3 */
  net: Float64Array;
  /** 1 where an ohmic contact holds the potential */
  contact: Uint8Array;
  /** 1 where the biased carrier's quasi-Fermi level moves with the bias (see above) */
  shifted: Uint8Array;
  /** 1 in the biased region: its charge is the one whose change with bias is the capacitance */
  biased: Uint8Array;
  /** +1: the biased region is n-type and raised by V; −1: p-type and lowered by V */
  sign: 1 | -1;
}

export interface NewtonOutcome {
  converged: boolean;
  iterations: number;
  /** conjugate-gradient iterations summed over the Newton iterations */
  linearIterations: number;
  /** the last Newton update, V */
  lastUpdateV: number;
}

/** Newton converges when the largest update is below this, V. */
const NEWTON_TOLERANCE_V = 1e-7;
const MAX_NEWTON = 60;
/**
 * Within a continuation step Newton gives up sooner and the step is halved: measured on the
 * default grid of the boron base, a step of 1 V takes 4–5 iterations, 10 V 7, 0 → 42 V 17.
 */
const MAX_NEWTON_STEP = 25;
/**
 * Conjugate gradients stop when the preconditioned residual has fallen by this factor: loose
 * inside Newton (an inexact Newton step still converges, at a rate no worse than the factor;
 * Dembo, Eisenstat & Steihaug, SIAM J. Numer. Anal. 19 (1982) 400, from memory), tight for the
 * tangent, which the capacitance is read from.
 */
const CG_NEWTON_TOLERANCE = 1e-4;
const CG_TANGENT_TOLERANCE = 1e-10;

/**
 * Newton's method on the finite-volume residual with a backtracking line search on its norm.
 * The Jacobian −Δ + diag(κ·V·(n + p)/Vt) is symmetric positive definite (Dirichlet rows
 * eliminated), so each linear solve is conjugate gradients preconditioned by a multigrid
 * V-cycle (`multigrid.ts`: z-line relaxation, coarsening in x), whose iteration count stays
 * flat as the grid is refined; on a single column the line solve is exact and one iteration
 * solves. Every buffer is allocated here, once.
 */
export class PoissonSolver {
  readonly problem: JunctionProblem;
  readonly n: number;
  /** potential, V */
  readonly psi: Float64Array;
  /** dψ/dV at the current bias (after `tangent()`) */
  readonly slope: Float64Array;
  biasV = 0;
  /** the bias at which `slope` holds the tangent (NaN: none) */
  private slopeAtV = Number.NaN;
  private readonly volume: Float64Array;
  /** coupling to the next node along x and along z (area/distance) */
  private readonly tx: Float64Array;
  private readonly tz: Float64Array;
  private readonly diag: Float64Array;
  private readonly residual: Float64Array;
  private readonly trial: Float64Array;
  private readonly step: Float64Array;
  private readonly qv: Float64Array;
  private readonly multigrid: FivePointMultigrid;
  private readonly contactShift: Float64Array;
  private readonly neutral: Float64Array;
  private readonly saved: Float64Array;

  constructor(problem: JunctionProblem) {
    this.problem = problem;
    const { mesh } = problem;
    const { nx, nz } = mesh;
    const n = nx * nz;
    this.n = n;
    const buf = () => new Float64Array(n);
    this.psi = buf(); this.slope = buf(); this.volume = buf(); this.tx = buf(); this.tz = buf();
    this.diag = buf(); this.residual = buf(); this.trial = buf(); this.step = buf();
    this.qv = buf(); this.contactShift = buf(); this.neutral = buf(); this.saved = buf();
    for (let j = 0; j < nz; j++) {
      for (let i = 0; i < nx; i++) {
        const k = j * nx + i;
        this.volume[k] = mesh.xWidth[i] * mesh.zWidth[j];
        if (i + 1 < nx) this.tx[k] = mesh.zWidth[j] / (mesh.x[i + 1] - mesh.x[i]);
        if (j + 1 < nz) this.tz[k] = mesh.xWidth[i] / (mesh.z[j + 1] - mesh.z[j]);
        const net = problem.net[k];
        this.neutral[k] = THERMAL_VOLTAGE_V * Math.asinh(net / (2 * INTRINSIC_300K_CM3));
        // A contact on a node of the biased region's type inside it follows the bias.
        const biasedType = problem.sign > 0 ? net > 0 : net < 0;
        this.contactShift[k] = biasedType && problem.shifted[k] === 1 ? problem.sign : 0;
      }
    }
    this.psi.set(this.neutral);
    this.multigrid = new FivePointMultigrid(mesh.x, nz, problem.contact);
  }

  /** Carrier densities at node k for potential ψ and bias V. */
  electrons(psi: number, k: number, biasV: number): number {
    const phi = this.problem.sign > 0 ? biasV * this.problem.shifted[k] : 0;
    return INTRINSIC_300K_CM3 * Math.exp(clampExp((psi - phi) / THERMAL_VOLTAGE_V));
  }

  holes(psi: number, k: number, biasV: number): number {
    const phi = this.problem.sign < 0 ? -biasV * this.problem.shifted[k] : 0;
    return INTRINSIC_300K_CM3 * Math.exp(clampExp((phi - psi) / THERMAL_VOLTAGE_V));
  }

  /** Residual of `psi` at bias V into `out`; returns its 2-norm. Fills the Jacobian's diagonal when `jacobian`. */
  private evaluate(psi: Float64Array, biasV: number, out: Float64Array, jacobian: boolean): number {
    const { nx } = this.problem.mesh;
    const { contact, net, shifted, sign } = this.problem;
    const phiN = sign > 0 ? biasV : 0;
    const phiP = sign < 0 ? -biasV : 0;
    return residualKernel(psi, out, jacobian ? this.diag : null, net, contact, shifted, phiN, phiP, this.tx, this.tz, this.volume, nx);
  }

  /** Sets the contacts to their value at bias V. */
  private holdContacts(psi: Float64Array, biasV: number): void {
    const { contact } = this.problem;
    for (let k = 0; k < this.n; k++) if (contact[k] === 1) psi[k] = this.neutral[k] + biasV * this.contactShift[k];
  }

  /** Newton at bias V from the current potential (the contacts are moved to V first). */
  solve(biasV: number, maxIterations = MAX_NEWTON): NewtonOutcome {
    const { psi, residual, step, trial } = this;
    this.slopeAtV = Number.NaN;
    this.holdContacts(psi, biasV);
    let norm = this.evaluate(psi, biasV, residual, true);
    let linear = 0;
    let last = Infinity;
    for (let it = 1; it <= maxIterations; it++) {
      for (let k = 0; k < this.n; k++) residual[k] = -residual[k];
      linear += this.solveLinear(residual, step, CG_NEWTON_TOLERANCE);
      let lambda = 1;
      let trialNorm = Infinity;
      // The last trial evaluated is the one kept: its residual and Jacobian serve the next iteration.
      for (let halvings = 0; halvings < 30; halvings++) {
        for (let k = 0; k < this.n; k++) trial[k] = psi[k] + lambda * step[k];
        trialNorm = this.evaluate(trial, biasV, this.qv, true);
        if (trialNorm <= norm || trialNorm < 1e-12) break;
        lambda *= 0.5;
      }
      const largest = largestUpdate(step, lambda);
      psi.set(trial);
      residual.set(this.qv);
      norm = trialNorm;
      last = largest;
      if (largest < NEWTON_TOLERANCE_V) {
        this.biasV = biasV;
        return { converged: true, iterations: it, linearIterations: linear, lastUpdateV: largest };
      }
    }
    return { converged: false, iterations: maxIterations, linearIterations: linear, lastUpdateV: last };
  }

  /**
   * dψ/dV at the converged bias into `slope`: J·u = −∂R/∂V, with u on the contacts their
   * own shift. A first-order predictor for the next bias and the small-signal capacitance.
   * Kept until the potential moves (0 iterations when it is already there). A loose tangent
   * is a poor predictor: at a tolerance of 1e-3 a 5 V step took 7–9 Newton iterations
   * instead of 6–7, and a breakdown search four times as long.
   */
  tangent(): number {
    if (this.slopeAtV === this.biasV) return 0;
    const { psi, slope, residual, problem } = this;
    const { nx, nz } = problem.mesh;
    const { contact, shifted, sign } = problem;
    this.evaluate(psi, this.biasV, residual, true);
    for (let k = 0; k < this.n; k++) {
      if (contact[k] === 1) { residual[k] = 0; continue; }
      const v = this.volume[k] * KAPPA;
      const carrier = sign > 0 ? this.electrons(psi[k], k, this.biasV) : -this.holes(psi[k], k, this.biasV);
      // −∂R/∂V, then the contacts' known shift moved to the right-hand side.
      let rhs = (v * shifted[k] * carrier) / THERMAL_VOLTAGE_V;
      const i = k % nx;
      const j = (k - i) / nx;
      if (i > 0 && contact[k - 1] === 1) rhs += this.tx[k - 1] * this.contactShift[k - 1];
      if (i + 1 < nx && contact[k + 1] === 1) rhs += this.tx[k] * this.contactShift[k + 1];
      if (j > 0 && contact[k - nx] === 1) rhs += this.tz[k - nx] * this.contactShift[k - nx];
      if (j + 1 < nz && contact[k + nx] === 1) rhs += this.tz[k] * this.contactShift[k + nx];
      residual[k] = rhs;
    }
    const iterations = this.solveLinear(residual, slope, CG_TANGENT_TOLERANCE);
    for (let k = 0; k < this.n; k++) if (contact[k] === 1) slope[k] = this.contactShift[k];
    this.slopeAtV = this.biasV;
    return iterations;
  }

  /**
   * Moves to bias V by continuation: the tangent predicts, Newton corrects. The first step goes
   * `firstStepV` (default: the whole way); a step that fails is halved (up to ten times) and
   * retried from the last converged state, and steps grow again while Newton converges fast.
   */
  continueTo(targetV: number, firstStepV = Infinity): NewtonOutcome & { steps: number } {
    const { saved } = this;
    let stepV = Math.min(firstStepV, Math.abs(targetV - this.biasV));
    let total: NewtonOutcome = { converged: true, iterations: 0, linearIterations: 0, lastUpdateV: 0 };
    let steps = 0;
    let failures = 0;
    while (this.biasV !== targetV) {
      const from = this.biasV;
      const next = Math.abs(targetV - from) <= stepV * 1.0001 ? targetV : from + Math.sign(targetV - from) * stepV;
      saved.set(this.psi);
      this.tangent();
      for (let k = 0; k < this.n; k++) this.psi[k] += (next - from) * this.slope[k];
      const out = this.solve(next, MAX_NEWTON_STEP);
      steps++;
      total = { converged: out.converged, iterations: total.iterations + out.iterations, linearIterations: total.linearIterations + out.linearIterations, lastUpdateV: out.lastUpdateV };
      if (!out.converged) {
        this.psi.set(saved);
        this.biasV = from;
        // `slope` still holds the tangent at `from`.
        this.slopeAtV = from;
        if (++failures > 10) return { ...total, converged: false, steps };
        stepV *= 0.5;
        continue;
      }
      if (out.iterations <= 5) stepV *= 2;
      else if (out.iterations > 9) stepV *= 0.5;
    }
    return { ...total, steps };
  }

  /**
   * Charge of the biased region's carriers per unit length of the cross-section (C/cm) and its
   * derivative with bias (F/cm, from the tangent: call `tangent()` first). Those carriers are
   * in equilibrium with the biased contact everywhere its quasi-Fermi level reaches, so their
   * charge is what flows into that contact as the bias moves: the capacitance does not depend
   * on where between the depletion edges one draws the line, which a mesh cell coarser than
   * the heavy side's Debye length would otherwise blur (holes of a p+ side spill into the first
   * n node).
   */
  regionCharge(): { chargeCPerCm: number; capacitanceFPerCm: number } {
    const { psi, slope, problem, volume } = this;
    const { sign, shifted } = problem;
    let q = 0;
    let dq = 0;
    for (let k = 0; k < this.n; k++) {
      if (shifted[k] !== 1) continue;
      if (sign > 0) {
        const e = this.electrons(psi[k], k, this.biasV);
        q -= volume[k] * e;
        dq -= (volume[k] * e * (slope[k] - 1)) / THERMAL_VOLTAGE_V;
      } else {
        const h = this.holes(psi[k], k, this.biasV);
        q += volume[k] * h;
        dq += (volume[k] * h * (-1 - slope[k])) / THERMAL_VOLTAGE_V;
      }
    }
    const toCm = ELEMENTARY_CHARGE_C * 1e-8;
    return { chargeCPerCm: q * toCm, capacitanceFPerCm: Math.abs(dq * toCm) };
  }

  /** Residual norm of the current potential at the current bias (for tests). */
  residualNorm(out: Float64Array = this.qv): number {
    return this.evaluate(this.psi, this.biasV, out, false);
  }

  /** Σ|T|·|ψ| scale of the residual at node k: flux terms' own size, to judge a residual against. */
  fluxScale(k: number): number {
    const { nx, nz } = this.problem.mesh;
    const i = k % nx;
    const j = (k - i) / nx;
    const { tx, tz, psi } = this;
    let s = 0;
    if (i > 0) s += tx[k - 1] * Math.abs(psi[k] - psi[k - 1]);
    if (i + 1 < nx) s += tx[k] * Math.abs(psi[k] - psi[k + 1]);
    if (j > 0) s += tz[k - nx] * Math.abs(psi[k] - psi[k - nx]);
    if (j + 1 < nz) s += tz[k] * Math.abs(psi[k] - psi[k + nx]);
    return s + this.volume[k] * KAPPA * Math.abs(this.problem.net[k]);
  }

  /** Preconditioned conjugate gradients on J·x = b (contacts excluded); returns the iterations. */
  private solveLinear(b: Float64Array, x: Float64Array, tolerance: number): number {
    this.multigrid.setup(this.diag, this.tx, this.tz);
    return this.multigrid.solve(b, x, tolerance);
  }
}

/**
 * The finite-volume residual R = Σ T·(ψ_k − ψ_l) − κ·V·(p − n + N) at every free node (0 at
 * contacts) and, given `diag`, the Jacobian's diagonal Σ T + κ·V·(n + p)/Vt. The quasi-Fermi
 * levels are φ·shifted for each carrier. Returns ‖R‖₂.
 */
function residualKernel(psi: Float64Array, out: Float64Array, diag: Float64Array | null, net: Float64Array, contact: Uint8Array, shifted: Uint8Array,
  phiN: number, phiP: number, tx: Float64Array, tz: Float64Array, volume: Float64Array, nx: number): number {
  const n = psi.length;
  let sum = 0;
  for (let k = 0; k < n; k++) {
    if (contact[k] === 1) {
      out[k] = 0;
      if (diag !== null) diag[k] = 1;
      continue;
    }
    const i = k % nx;
    const pk = psi[k];
    let flux = 0;
    let coupling = 0;
    if (i > 0) { flux += tx[k - 1] * (pk - psi[k - 1]); coupling += tx[k - 1]; }
    if (i + 1 < nx) { flux += tx[k] * (pk - psi[k + 1]); coupling += tx[k]; }
    if (k >= nx) { flux += tz[k - nx] * (pk - psi[k - nx]); coupling += tz[k - nx]; }
    if (k + nx < n) { flux += tz[k] * (pk - psi[k + nx]); coupling += tz[k]; }
    const s = shifted[k];
    const e = INTRINSIC_300K_CM3 * Math.exp(clampExp((pk - phiN * s) / THERMAL_VOLTAGE_V));
    const h = INTRINSIC_300K_CM3 * Math.exp(clampExp((phiP * s - pk) / THERMAL_VOLTAGE_V));
    const v = volume[k] * KAPPA;
    const rk = flux - v * (h - e + net[k]);
    out[k] = rk;
    sum += rk * rk;
    if (diag !== null) diag[k] = coupling + (v * (e + h)) / THERMAL_VOLTAGE_V;
  }
  return Math.sqrt(sum);
}

/** max |λ·step| */
function largestUpdate(step: Float64Array, lambda: number): number {
  let largest = 0;
  for (let k = 0; k < step.length; k++) {
    const v = Math.abs(step[k]);
    if (v > largest) largest = v;
  }
  return largest * lambda;
}

function clampExp(a: number): number {
  return a > EXP_LIMIT ? EXP_LIMIT : a < -EXP_LIMIT ? -EXP_LIMIT : a;
}

/** |E| and its components at each node, V/cm, by central differences (one-sided at the edges; zero across a mirror wall). */
export function electricField(mesh: PoissonMesh, psi: Float64Array, ex: Float64Array, ez: Float64Array, magnitude: Float64Array): void {
  const { nx, nz, x, z } = mesh;
  for (let j = 0; j < nz; j++) {
    for (let i = 0; i < nx; i++) {
      const k = j * nx + i;
      let gx = 0;
      if (nx > 1) {
        if (i === 0) gx = 0.5 * (psi[k + 1] - psi[k]) / (x[1] - x[0]);
        else if (i === nx - 1) gx = 0.5 * (psi[k] - psi[k - 1]) / (x[i] - x[i - 1]);
        else gx = derivative(psi[k - 1], psi[k], psi[k + 1], x[i] - x[i - 1], x[i + 1] - x[i]);
      }
      let gz: number;
      if (j === 0) gz = (psi[k + nx] - psi[k]) / (z[1] - z[0]);
      else if (j === nz - 1) gz = (psi[k] - psi[k - nx]) / (z[j] - z[j - 1]);
      else gz = derivative(psi[k - nx], psi[k], psi[k + nx], z[j] - z[j - 1], z[j + 1] - z[j]);
      // V/µm → V/cm
      ex[k] = -gx * 1e4;
      ez[k] = -gz * 1e4;
      magnitude[k] = Math.hypot(ex[k], ez[k]);
    }
  }
}

/** First derivative at the middle of three points spaced hm, hp (second-order on a non-uniform mesh). */
function derivative(fm: number, f0: number, fp: number, hm: number, hp: number): number {
  return (hm * hm * (fp - f0) + hp * hp * (f0 - fm)) / (hm * hp * (hm + hp));
}
