import { electricField, type PoissonMesh, type PoissonSolver } from './electrostatics.ts';
import { ionisationIntegral, type IonisationModel } from './ionisation.ts';

/**
 * Avalanche breakdown: the ionisation integral along field lines through the depletion
 * region, and the bias at which its largest value reaches 1.
 *
 * Field lines start at the nodes next to the metallurgical junction where the field is
 * strongest (and at the peak-field node), and are traced both ways with midpoint steps of
 * half the local mesh spacing on the bilinear field until |E| falls below STOP_FIELD, where
 * α is negligible (α_n(5e4 V/cm) ≈ 1e-5 /cm with Van Overstraeten & De Man's constants).
 */
const STOP_FIELD_V_PER_CM = 5e4;
const MAX_TRACE_STEPS = 6000;
const START_LINES = 24;

/** Buffers for the field and one traced line, sized once per mesh. */
export class FieldLines {
  readonly mesh: PoissonMesh;
  readonly ex: Float64Array;
  readonly ez: Float64Array;
  readonly magnitude: Float64Array;
  private readonly pathField = new Float64Array(2 * MAX_TRACE_STEPS + 2);
  private readonly pathArc = new Float64Array(2 * MAX_TRACE_STEPS + 2);
  private readonly backField = new Float64Array(MAX_TRACE_STEPS + 1);
  private readonly backArc = new Float64Array(MAX_TRACE_STEPS + 1);
  private readonly forwardField = new Float64Array(MAX_TRACE_STEPS + 1);
  private readonly forwardArc = new Float64Array(MAX_TRACE_STEPS + 1);

  constructor(mesh: PoissonMesh) {
    this.mesh = mesh;
    const n = mesh.nx * mesh.nz;
    this.ex = new Float64Array(n);
    this.ez = new Float64Array(n);
    this.magnitude = new Float64Array(n);
  }

  update(psi: Float64Array): void {
    electricField(this.mesh, psi, this.ex, this.ez, this.magnitude);
  }

  /** Node of the largest |E| and its value. */
  peak(): { k: number; fieldVPerCm: number } {
    let best = 0;
    for (let k = 1; k < this.magnitude.length; k++) if (this.magnitude[k] > this.magnitude[best]) best = k;
    return { k: best, fieldVPerCm: this.magnitude[best] };
  }

  /** Field at (x, z), bilinear between nodes (clamped to the node box). */
  private sample(x: number, z: number, out: Float64Array): void {
    const { nx } = this.mesh;
    const i = cellOf(this.mesh.x, x);
    const j = cellOf(this.mesh.z, z);
    const tx = nx > 1 ? clamp01((x - this.mesh.x[i]) / (this.mesh.x[i + 1] - this.mesh.x[i])) : 0;
    const tz = clamp01((z - this.mesh.z[j]) / (this.mesh.z[j + 1] - this.mesh.z[j]));
    const i1 = nx > 1 ? i + 1 : i;
    const k00 = j * nx + i, k10 = j * nx + i1, k01 = (j + 1) * nx + i, k11 = (j + 1) * nx + i1;
    const w00 = (1 - tx) * (1 - tz), w10 = tx * (1 - tz), w01 = (1 - tx) * tz, w11 = tx * tz;
    out[0] = w00 * this.ex[k00] + w10 * this.ex[k10] + w01 * this.ex[k01] + w11 * this.ex[k11];
    out[1] = w00 * this.ez[k00] + w10 * this.ez[k10] + w01 * this.ez[k01] + w11 * this.ez[k11];
  }

  private localSpacing(x: number, z: number): number {
    const { nx } = this.mesh;
    const j = cellOf(this.mesh.z, z);
    const dz = this.mesh.z[j + 1] - this.mesh.z[j];
    if (nx === 1) return dz;
    const i = cellOf(this.mesh.x, x);
    return Math.min(dz, this.mesh.x[i + 1] - this.mesh.x[i]);
  }

  /** Traces from (x, z) along direction·E; writes |E| and arc length (µm) into the buffers; returns the count. */
  private readonly e = new Float64Array(2);

  private trace(x0: number, z0: number, direction: 1 | -1, field: Float64Array, arc: Float64Array): number {
    const { e } = this;
    const { x, z } = this.mesh;
    const xMin = x[0], xMax = x[x.length - 1], zMin = z[0], zMax = z[z.length - 1];
    let px = x0;
    let pz = z0;
    let s = 0;
    this.sample(px, pz, e);
    let count = 0;
    field[count] = Math.hypot(e[0], e[1]);
    arc[count++] = 0;
    while (count < MAX_TRACE_STEPS) {
      const mag = Math.hypot(e[0], e[1]);
      if (mag < STOP_FIELD_V_PER_CM) break;
      const h = 0.5 * this.localSpacing(px, pz);
      const mx = clamp(px + 0.5 * h * direction * (e[0] / mag), xMin, xMax);
      const mz = clamp(pz + 0.5 * h * direction * (e[1] / mag), zMin, zMax);
      this.sample(mx, mz, e);
      const mm = Math.hypot(e[0], e[1]);
      if (mm === 0) break;
      const nxp = clamp(px + h * direction * (e[0] / mm), xMin, xMax);
      const nzp = clamp(pz + h * direction * (e[1] / mm), zMin, zMax);
      const moved = Math.hypot(nxp - px, nzp - pz);
      if (moved < 1e-9) break;
      px = nxp;
      pz = nzp;
      s += moved;
      this.sample(px, pz, e);
      field[count] = Math.hypot(e[0], e[1]);
      arc[count++] = s;
    }
    return count;
  }

  /**
   * The ionisation integral along the field line through (x, z): traced against E to the n
   * side's end (where holes enter) and along E to the p side's end.
   */
  integralThrough(model: IonisationModel, x: number, z: number): number {
    const nb = this.trace(x, z, -1, this.backField, this.backArc);
    const nf = this.trace(x, z, 1, this.forwardField, this.forwardArc);
    const total = this.backArc[nb - 1];
    let count = 0;
    for (let k = nb - 1; k >= 0; k--) {
      this.pathField[count] = this.backField[k];
      this.pathArc[count++] = total - this.backArc[k];
    }
    for (let k = 1; k < nf; k++) {
      this.pathField[count] = this.forwardField[k];
      this.pathArc[count++] = total + this.forwardArc[k];
    }
    return ionisationIntegral(model, this.pathField, this.pathArc, count);
  }

  /**
   * The largest ionisation integral over the field lines through the strongest-field nodes
   * beside the junction (net doping changes sign to a neighbour) and through the peak node.
   */
  largestIntegral(model: IonisationModel, net: Float64Array): { integral: number; x: number; z: number } {
    const { nx, nz } = this.mesh;
    const starts = strongestJunctionNodes(this.magnitude, net, nx, nz, START_LINES);
    starts.push(this.peak().k);
    let best = { integral: 0, x: 0, z: 0 };
    for (const k of starts) {
      const i = k % nx;
      const j = (k - i) / nx;
      const v = this.integralThrough(model, this.mesh.x[i], this.mesh.z[j]);
      if (v > best.integral) best = { integral: v, x: this.mesh.x[i], z: this.mesh.z[j] };
    }
    return best;
  }
}

function strongestJunctionNodes(magnitude: Float64Array, net: Float64Array, nx: number, nz: number, count: number): number[] {
  const candidates: number[] = [];
  for (let k = 0; k < net.length; k++) {
    const i = k % nx;
    const s = Math.sign(net[k]);
    if ((i > 0 && Math.sign(net[k - 1]) !== s) || (i + 1 < nx && Math.sign(net[k + 1]) !== s)
      || (k >= nx && Math.sign(net[k - nx]) !== s) || (k + nx < nx * nz && Math.sign(net[k + nx]) !== s)) candidates.push(k);
  }
  candidates.sort((a, b) => magnitude[b] - magnitude[a]);
  return candidates.slice(0, count);
}

function cellOf(axis: Float64Array, v: number): number {
  if (axis.length < 2) return 0;
  let lo = 0;
  let hi = axis.length - 2;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (axis[mid] <= v) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

function clamp(v: number, lo: number, hi: number): number {
  return v < lo ? lo : v > hi ? hi : v;
}

function clamp01(v: number): number {
  return clamp(v, 0, 1);
}

export interface BreakdownResult {
  /** bias where the largest ionisation integral reaches 1, V; null if the solve failed on the way */
  breakdownV: number | null;
  /** where the field line with the largest integral starts, µm */
  atUm: [number, number] | null;
  /** Poisson solves made (biases visited) */
  solves: number;
  /** Newton and conjugate-gradient iterations over the search (continuation included) */
  iterations: number;
  linearIterations: number;
  /** the bias at which Newton failed, if it did */
  failedAtV: number | null;
}

/**
 * ln I against ln V is nearly a straight line of this slope below breakdown (measured on the
 * boron base with Van Overstraeten & De Man's coefficients: 6.0–6.4 for the region, 5.6–6.6
 * for its plane junction, from 20 V to breakdown): the first prediction, before two points
 * give the slope.
 */
const LOG_SLOPE = 6;
/** Stop when |ln I| is below this (0.002 % in V at the slope above)... */
const LN_TOLERANCE = 1e-4;
/** ...or when the bracket is this narrow, relative to V. */
const BRACKET_TOLERANCE = 1e-3;

/**
 * Raises the bias from the solver's current state until the largest ionisation integral is 1:
 * from `guessV`/2, by the secant on ln I against ln V through the last two biases (nearly a
 * straight line; the first step with the slope LOG_SLOPE), kept inside the bracket once there
 * is one (falling back to interpolation between its ends), to 0.1 % in V. Measured on the
 * default grid of the boron base: 3–4 biases against 6 for geometric steps of 1.5 and the
 * secant on ln I against V.
 */
export function searchBreakdown(solver: PoissonSolver, lines: FieldLines, model: IonisationModel, guessV: number): BreakdownResult {
  const net = solver.problem.net;
  let iterations = 0;
  let linearIterations = 0;
  let solves = 0;
  const evaluate = (v: number): { ln: number; x: number; z: number } | null => {
    const out = solver.continueTo(v);
    iterations += out.iterations;
    linearIterations += out.linearIterations;
    solves++;
    if (!out.converged) return null;
    lines.update(solver.psi);
    const best = lines.largestIntegral(model, net);
    return { ln: Math.log(Math.max(best.integral, 1e-300)), x: best.x, z: best.z };
  };
  const result = (breakdownV: number | null, atUm: [number, number] | null, failedAtV: number | null): BreakdownResult =>
    ({ breakdownV, atUm, solves, iterations, linearIterations, failedAtV });
  let lo: { v: number; ln: number } | null = null;
  let hi: { v: number; ln: number } | null = null;
  let previous: { logV: number; ln: number } | null = null;
  let at: [number, number] | null = null;
  let v = Math.max(guessV * 0.5, solver.biasV);
  for (let tries = 0; tries < 40; tries++) {
    const r = evaluate(v);
    if (r === null) return result(null, null, v);
    if (Math.abs(r.ln) < LN_TOLERANCE) return result(v, [r.x, r.z], null);
    if (r.ln < 0) {
      if (lo === null || v > lo.v) lo = { v, ln: r.ln };
    } else if (hi === null || v < hi.v) {
      hi = { v, ln: r.ln };
      at = [r.x, r.z];
    }
    if (lo !== null && hi !== null && hi.v - lo.v <= BRACKET_TOLERANCE * hi.v) break;
    const logV = Math.log(v);
    let slope = previous === null ? LOG_SLOPE : (r.ln - previous.ln) / (logV - previous.logV);
    if (!(slope > 0.5 && Number.isFinite(slope))) slope = LOG_SLOPE;
    let next = v * Math.exp(-r.ln / slope);
    if (lo !== null && hi !== null) {
      const margin = 1e-4 * hi.v;
      if (!(next > lo.v + margin && next < hi.v - margin)) next = logInterpolation(lo, hi);
      next = Math.min(hi.v - margin, Math.max(lo.v + margin, next));
    } else if (hi === null) {
      next = Math.min(2 * v, Math.max(1.01 * v, next));
    } else {
      next = Math.max(0.5 * v, Math.min(0.99 * v, next));
    }
    previous = { logV, ln: r.ln };
    v = next;
  }
  if (lo === null || hi === null) return result(null, null, null);
  return result(logInterpolation(lo, hi), at, null);
}

/** Where the straight line through (ln V, ln I) at the bracket's ends crosses ln I = 0, V. */
function logInterpolation(lo: { v: number; ln: number }, hi: { v: number; ln: number }): number {
  const a = Math.log(lo.v);
  const b = Math.log(hi.v);
  return Math.exp(a + ((0 - lo.ln) * (b - a)) / (hi.ln - lo.ln));
}
