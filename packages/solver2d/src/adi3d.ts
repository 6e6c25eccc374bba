import { uniformAxis } from './mesh.ts';
import { buildMask3d, buildMesh3d, type Mask3d, type Mesh3d } from './mesh3d.ts';
import { factorTridiagonal } from './tridiagonal.ts';
import { PRIMING_CALLS, primeOnce } from './priming.ts';

/**
 * Alternating-direction implicit stepper for ∂C/∂t = ∇·(D∇C) in 3D under a plan-view mask,
 * for one species with D uniform in space over a time step (D may change between steps).
 *
 * Finite volumes on the tensor mesh of mesh3d.ts: with Ax, Ay, Az the parts of the discrete
 * divergence per unit D, (Ax C)_i = [g_{i+½}(C_{i+1} − C_i) − g_{i−½}(C_i − C_{i−1})]/Δx_i,
 * g = 1/(x_{i+1} − x_i), and likewise in y and z; zero flux through every wall (a symmetry
 * plane of the layout is a wall), and at the surface either zero flux (sealed) or the
 * surface node held at Cs (predeposition, in the open cells).
 *
 * Schemes, with ν = D·τ and A = Ax + Ay + Az:
 *   Douglas–Gunn (Douglas and Gunn, Numer. Math. 6 (1964) 428; the form from memory), second
 *   order and unconditionally stable for constant D, in its increment form
 *       (I − ν/2·Ax) Δ₁ = ν·A Cⁿ,   (I − ν/2·Ay) Δ₂ = Δ₁,   (I − ν/2·Az) Δ₃ = Δ₂,
 *       Cⁿ⁺¹ = Cⁿ + Δ₃
 *   (the product of the three factors, multiplied out, is Crank–Nicolson plus a term of
 *   order ν²·τ: second order; its amplification is 1 − Σa/Π(1 + a/2) with a ≥ 0 the mode's
 *   ν·λ per direction, within [−1, 1]). Peaceman–Rachford, the 2D stepper's scheme, is not
 *   stable in 3D.
 *   split implicit (one backward-Euler sweep per direction), first order, amplification
 *   1/Π(1 + a): for the first steps after a discontinuity, where Douglas–Gunn carries the
 *   stiffest modes on undamped (its amplification tends to −1 where one direction is stiff
 *   and to +1 where all three are).
 *       (I − ν·Ax)(I − ν·Ay)(I − ν·Az) Cⁿ⁺¹ = Cⁿ
 * Each factor is conservative (Σ V·Ak v = 0 for any v: the fluxes cancel face by face), so
 * a sealed step keeps the content to rounding; a held step's inflow is the content's change.
 *
 * Memory: the field is x-contiguous ((k·ny + j)·nx + i). The x sweep solves contiguous
 * lines, four at a time with their recurrences interleaved; the y and z sweeps run their
 * Thomas recurrences for a whole row (y) or plane (z) of lines at once, the inner loop
 * along contiguous x, so that no transposition is needed. A step is two passes over the
 * field: forward, plane by plane, the right-hand side, the x and y solves of the plane (in
 * cache) and the plane's step of the z elimination; backward, the z substitution, each
 * plane added to C once final. A held step's surface lines (x and y lines of plane 0, open cells as identity rows)
 * are factorised line by line; its z columns take one of two shared factors, free or held
 * at node 0, by runs of the surface mask. One buffer of the field's size (the increment) is
 * the stepper's; `step` allocates nothing.
 */
export type Scheme3d = 'douglas-gunn' | 'split-implicit';

/** A factorised tridiagonal matrix shared by every line of an axis (see tridiagonal.ts). */
interface AxisFactor {
  l: Float64Array;
  cp: Float64Array;
  inv: Float64Array;
}

function axisFactor(n: number): AxisFactor {
  return { l: new Float64Array(n), cp: new Float64Array(n), inv: new Float64Array(n) };
}

/** g_{i−½}/Δ_i and g_{i+½}/Δ_i of a cell-centred axis (zero at the walls). */
function cellCoefficients(c: Float64Array, d: Float64Array, lo: Float64Array, up: Float64Array): void {
  const n = c.length;
  for (let i = 0; i < n; i++) {
    lo[i] = i > 0 ? 1 / ((c[i] - c[i - 1]) * d[i]) : 0;
    up[i] = i < n - 1 ? 1 / ((c[i + 1] - c[i]) * d[i]) : 0;
  }
}

/** Runs of a surface over the plane index: [start, end) and 1 where open. */
interface SurfaceRuns {
  start: Int32Array;
  end: Int32Array;
  open: Uint8Array;
}

/** The surface's runs of open and masked cells, in plane order. */
function surfaceRuns(open: Uint8Array): SurfaceRuns {
  const starts: number[] = [];
  const ends: number[] = [];
  const opens: number[] = [];
  let start = 0;
  for (let p = 1; p <= open.length; p++) {
    if (p === open.length || open[p] !== open[start]) {
      starts.push(start);
      ends.push(p);
      opens.push(open[start]);
      start = p;
    }
  }
  return { start: Int32Array.from(starts), end: Int32Array.from(ends), open: Uint8Array.from(opens) };
}

export class AdiStepper3d {
  readonly nx: number;
  readonly ny: number;
  readonly nz: number;
  /** nodes per z plane, nx·ny */
  readonly plane: number;
  private readonly ax: Float64Array;
  private readonly cx: Float64Array;
  private readonly ay: Float64Array;
  private readonly cy: Float64Array;
  private readonly az: Float64Array;
  private readonly cz: Float64Array;
  private readonly volumeX: Float64Array;
  private readonly volumeY: Float64Array;
  private readonly volumeZ: Float64Array;
  private readonly open: Uint8Array;
  private readonly fx: AxisFactor;
  private readonly fy: AxisFactor;
  private readonly fz: AxisFactor;
  private readonly fzHeld: AxisFactor;
  /** runs of the surface mask over the plane index (held surface), and the whole plane as one sealed run */
  private readonly maskRuns: SurfaceRuns;
  private readonly sealedRuns: SurfaceRuns;
  private readonly lo: Float64Array;
  private readonly di: Float64Array;
  private readonly up: Float64Array;
  private readonly lineCp: Float64Array;
  private readonly delta: Float64Array;

  constructor(mesh: Mesh3d, mask: Mask3d) {
    primeOnce(primeKernels3d);
    const { nx, ny, nz } = mesh;
    this.nx = nx;
    this.ny = ny;
    this.nz = nz;
    this.plane = nx * ny;
    this.ax = new Float64Array(nx);
    this.cx = new Float64Array(nx);
    this.ay = new Float64Array(ny);
    this.cy = new Float64Array(ny);
    cellCoefficients(mesh.x, mesh.dx, this.ax, this.cx);
    cellCoefficients(mesh.y, mesh.dy, this.ay, this.cy);
    this.az = new Float64Array(nz);
    this.cz = new Float64Array(nz);
    const { z, dzVolume } = mesh;
    cellCoefficients(z, dzVolume, this.az, this.cz);
    this.volumeX = mesh.dx;
    this.volumeY = mesh.dy;
    this.volumeZ = dzVolume;
    this.open = mask.open;
    this.fx = axisFactor(nx);
    this.fy = axisFactor(ny);
    this.fz = axisFactor(nz);
    this.fzHeld = axisFactor(nz);
    this.maskRuns = surfaceRuns(mask.open);
    this.sealedRuns = { start: Int32Array.of(0), end: Int32Array.of(this.plane), open: Uint8Array.of(0) };
    const n = Math.max(nx, ny, nz);
    this.lo = new Float64Array(n);
    this.di = new Float64Array(n);
    this.up = new Float64Array(n);
    this.lineCp = new Float64Array(n);
    this.delta = new Float64Array(this.plane * nz);
  }

  /** Atoms in the domain, cm^-3·µm³: Σ C·Δx·Δy·Δz. */
  content(c: Float64Array): number {
    const { nx, ny, nz, volumeX, volumeY, volumeZ } = this;
    let total = 0;
    for (let k = 0; k < nz; k++) {
      let planeSum = 0;
      for (let j = 0; j < ny; j++) planeSum += rowContent(c, (k * ny + j) * nx, volumeX, nx) * volumeY[j];
      total += planeSum * volumeZ[k];
    }
    return total;
  }

  /** True when every value of the bottom plane is finite (a NaN anywhere gets there in one z sweep). */
  bottomPlaneFinite(c: Float64Array): boolean {
    const base = (this.nz - 1) * this.plane;
    let sum = 0;
    for (let p = 0; p < this.plane; p++) sum += c[base + p];
    return Number.isFinite(sum);
  }

  /** Holds the open surface cells at `surfaceValue`; returns the atoms added (cm^-3·µm³). */
  holdSurface(c: Float64Array, surfaceValue: number): number {
    const { nx, ny, open, volumeX, volumeY } = this;
    const v0 = this.volumeZ[0];
    let added = 0;
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        const p = j * nx + i;
        if (open[p] !== 1) continue;
        added += (surfaceValue - c[p]) * volumeX[i] * volumeY[j] * v0;
        c[p] = surfaceValue;
      }
    }
    return added;
  }

  /**
   * Advances `c` by one step with ν = D·τ (µm²). `held` true holds the open surface cells at
   * their present value (call `holdSurface` first); false seals the surface. Returns the
   * atoms that entered during the step (cm^-3·µm³; 0 when sealed).
   */
  step(c: Float64Array, nu: number, scheme: Scheme3d, held: boolean): number {
    const before = held ? this.content(c) : 0;
    const dg = scheme === 'douglas-gunn';
    this.prepare(dg ? 0.5 * nu : nu);
    const d = dg ? this.delta : c;
    const { nz } = this;
    // Forward, plane by plane: the increment's right-hand side (Douglas–Gunn), the x and y
    // solves of the plane while it is in cache, and the plane's step of the z elimination.
    for (let k = 0; k < nz; k++) {
      if (dg) {
        this.residualPlane(c, d, nu, k);
        if (held && k === 0) clearHeld(d, this.open);
      }
      this.planeSolves(d, k, held && k === 0);
      this.zForward(d, k, held);
    }
    // Backward: the z substitution, and each plane added to c as soon as it is final.
    this.zBackward(c, d, held, dg);
    return held ? this.content(c) - before : 0;
  }

  /**
   * The same step with D varying in space (concentration-dependent diffusion): `nu` holds
   * ν = D·τ at every node, in the field's layout; a face takes the mean of its two nodes.
   * No two lines share a matrix, so each is factorised as it is solved: x rows one by one,
   * y and z lines a row or plane at a time with the factors kept per node. Douglas–Gunn with
   * non-commuting coefficients is not unconditionally stable; the time loop holds the step
   * growth and damps ringing as the 2D loop does.
   */
  stepVariable(c: Float64Array, nu: Float64Array, scheme: Scheme3d, held: boolean): number {
    const before = held ? this.content(c) : 0;
    const dg = scheme === 'douglas-gunn';
    const beta = dg ? 0.5 : 1;
    const d = dg ? this.delta : c;
    const { nx, ny, nz, plane, open } = this;
    if (this.cpZ === null) {
      this.cpZ = new Float64Array(plane * nz);
      this.cpY = new Float64Array(plane);
    }
    const cpZ = this.cpZ;
    const cpY = this.cpY!;
    for (let k = 0; k < nz; k++) {
      const surfaceHeld = held && k === 0;
      if (dg) {
        this.residualPlaneVariable(c, d, nu, k);
        if (surfaceHeld) clearHeld(d, open);
      }
      for (let j = 0; j < ny; j++) {
        const base = (k * ny + j) * nx;
        variableRow(d, nu, base, nx, this.ax, this.cx, beta, surfaceHeld ? open : this.noMask, surfaceHeld ? j * nx : 0, surfaceHeld ? 1 : 0, this.lineCp);
      }
      variableAcross(d, nu, k * plane, nx, ny, this.ay, this.cy, beta, cpY, 0, surfaceHeld ? open : this.noMask, surfaceHeld ? 1 : 0);
      variableZForward(d, nu, k, plane, nz, this.az, this.cz, beta, cpZ, held && k === 0 ? open : this.noMask, held && k === 0 ? 1 : 0);
    }
    for (let k = nz - 2; k >= 0; k--) {
      const o = k * plane;
      substituteVariable(d, cpZ, o, o + plane, plane);
      if (dg) addRange(c, d, o + plane, o + 2 * plane);
    }
    if (dg) addRange(c, d, 0, plane);
    return held ? this.content(c) - before : 0;
  }

  /** Per-node Thomas factors of the z and y solves of stepVariable (allocated at its first call). */
  private cpZ: Float64Array | null = null;
  private cpY: Float64Array | null = null;
  /** A mask of one zero, read with stride 0 where no position is held. */
  private readonly noMask = new Uint8Array(1);

  /** Plane k of out = (Ax(ν) + Ay(ν) + Az(ν)) c, faces taking the mean ν of their two nodes. */
  private residualPlaneVariable(c: Float64Array, out: Float64Array, nu: Float64Array, k: number): void {
    const { nx, ny, nz, plane, ax, cx, ay, cy, az, cz } = this;
    const zm = k > 0 ? -plane : 0;
    const zp = k < nz - 1 ? plane : 0;
    for (let j = 0; j < ny; j++) {
      const ym = j > 0 ? -nx : 0;
      const yp = j < ny - 1 ? nx : 0;
      variableResidualRow(c, out, nu, (k * ny + j) * nx, nx, ax, cx, 0.5 * ay[j], 0.5 * cy[j], 0.5 * az[k], 0.5 * cz[k], ym, yp, zm, zp);
    }
  }

  /** Factorises I − β·Ak for each axis, and the z factor held at node 0. */
  private prepare(beta: number): void {
    factorAxis(this.ax, this.cx, beta, this.fx, this.lo, this.di, this.up, false);
    factorAxis(this.ay, this.cy, beta, this.fy, this.lo, this.di, this.up, false);
    factorAxis(this.az, this.cz, beta, this.fz, this.lo, this.di, this.up, false);
    factorAxis(this.az, this.cz, beta, this.fzHeld, this.lo, this.di, this.up, true);
    this.beta = beta;
  }

  private beta = 0;

  /** Plane k of out = ν·(Ax + Ay + Az) c, row by row. */
  private residualPlane(c: Float64Array, out: Float64Array, nu: number, k: number): void {
    const { nx, ny, nz, plane, ax, cx, ay, cy, az, cz } = this;
    const zm = k > 0 ? -plane : 0;
    const zp = k < nz - 1 ? plane : 0;
    for (let j = 0; j < ny; j++) {
      const ym = j > 0 ? -nx : 0;
      const yp = j < ny - 1 ? nx : 0;
      residualRow(c, out, (k * ny + j) * nx, nx, ax, cx, nu * ay[j], nu * cy[j], nu * az[k], nu * cz[k], ym, yp, zm, zp, nu);
    }
  }

  /** The x solves of plane k's rows and the y solves of its columns, in place; `masked`: the held surface plane. */
  private planeSolves(d: Float64Array, k: number, masked: boolean): void {
    const { nx, ny, plane, open, beta } = this;
    if (masked) {
      for (let j = 0; j < ny; j++) maskedLine(d, j * nx, 1, nx, this.ax, this.cx, beta, open, j * nx, 1, this.lineCp);
      for (let i = 0; i < nx; i++) maskedLine(d, i, nx, ny, this.ay, this.cy, beta, open, i, nx, this.lineCp);
      return;
    }
    xLines(d, this.fx, nx, k * ny, (k + 1) * ny);
    linesAcross(d, k * plane, nx, ny, this.fy, 0, nx);
  }

  /** Plane k's step of the z forward elimination (runs of the mask pick the factor when held). */
  private zForward(d: Float64Array, k: number, held: boolean): void {
    const { start: starts, end: ends, open: kinds } = held ? this.maskRuns : this.sealedRuns;
    const o = k * this.plane;
    for (let r = 0; r < starts.length; r++) {
      const f = kinds[r] === 1 ? this.fzHeld : this.fz;
      if (k === 0) scaleRange(d, o + starts[r], o + ends[r], f.inv[0]);
      else eliminateRange(d, o, o - this.plane, starts[r], ends[r], f.l[k], f.inv[k]);
    }
  }

  /** The z back substitution from the bottom plane up; with `add`, c += d plane by plane once final. */
  private zBackward(c: Float64Array, d: Float64Array, held: boolean, add: boolean): void {
    const { nz, plane } = this;
    const { start: starts, end: ends, open: kinds } = held ? this.maskRuns : this.sealedRuns;
    for (let k = nz - 2; k >= 0; k--) {
      const o = k * plane;
      for (let r = 0; r < starts.length; r++) {
        const f = kinds[r] === 1 ? this.fzHeld : this.fz;
        substituteRange(d, o, o + plane, starts[r], ends[r], f.cp[k]);
      }
      if (add) addRange(c, d, o + plane, o + 2 * plane);
    }
    if (add) addRange(c, d, 0, plane);
  }
}

function scaleRange(d: Float64Array, from: number, to: number, factor: number): void {
  for (let p = from; p < to; p++) d[p] *= factor;
}

/** d[o + p] = (d[o + p] − l·d[prev + p])·inv for p in [from, to). */
function eliminateRange(d: Float64Array, o: number, prev: number, from: number, to: number, l: number, inv: number): void {
  for (let p = from; p < to; p++) d[o + p] = (d[o + p] - l * d[prev + p]) * inv;
}

/** d[o + p] −= cp·d[next + p] for p in [from, to). */
function substituteRange(d: Float64Array, o: number, next: number, from: number, to: number, cp: number): void {
  for (let p = from; p < to; p++) d[o + p] -= cp * d[next + p];
}

function addRange(c: Float64Array, d: Float64Array, from: number, to: number): void {
  for (let p = from; p < to; p++) c[p] += d[p];
}

function rowContent(c: Float64Array, base: number, volume: Float64Array, n: number): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += c[base + i] * volume[i];
  return s;
}

function clearHeld(d: Float64Array, open: Uint8Array): void {
  for (let p = 0; p < open.length; p++) if (open[p] === 1) d[p] = 0;
}

/** I − β·A of one axis (identity at node 0 when `heldFirst`), factorised into `f`. */
function factorAxis(gPrev: Float64Array, gNext: Float64Array, beta: number, f: AxisFactor,
                    lo: Float64Array, di: Float64Array, up: Float64Array, heldFirst: boolean): void {
  const n = gPrev.length;
  for (let i = 0; i < n; i++) {
    lo[i] = -beta * gPrev[i];
    up[i] = -beta * gNext[i];
    di[i] = 1 - lo[i] - up[i];
  }
  if (heldFirst) {
    lo[0] = 0; di[0] = 1; up[0] = 0;
  }
  f.l.set(lo.subarray(0, n));
  factorTridiagonal(lo, di, up, f.cp, f.inv, n);
}

/**
 * One row of ν·A c: `base` its first node; the y and z neighbours at fixed offsets (0 at a
 * wall, where the coefficient is 0 too), the x neighbours along the row, the two ends apart.
 */
function residualRow(c: Float64Array, out: Float64Array, base: number, nx: number, ax: Float64Array, cx: Float64Array,
                     wym: number, wyp: number, wzm: number, wzp: number, ym: number, yp: number, zm: number, zp: number, nu: number): void {
  let o = base;
  let c0 = c[o];
  out[o] = nu * cx[0] * (c[o + 1] - c0) + wym * (c[o + ym] - c0) + wyp * (c[o + yp] - c0) + wzm * (c[o + zm] - c0) + wzp * (c[o + zp] - c0);
  for (let i = 1; i < nx - 1; i++) {
    o = base + i;
    c0 = c[o];
    out[o] = nu * (ax[i] * (c[o - 1] - c0) + cx[i] * (c[o + 1] - c0)) +
      wym * (c[o + ym] - c0) + wyp * (c[o + yp] - c0) + wzm * (c[o + zm] - c0) + wzp * (c[o + zp] - c0);
  }
  o = base + nx - 1;
  c0 = c[o];
  out[o] = nu * ax[nx - 1] * (c[o - 1] - c0) + wym * (c[o + ym] - c0) + wyp * (c[o + yp] - c0) + wzm * (c[o + zm] - c0) + wzp * (c[o + zp] - c0);
}

/** Contiguous lines q0..q1−1 of n points, solved in place with one factor, four at a time. */
function xLines(d: Float64Array, f: AxisFactor, n: number, q0: number, q1: number): void {
  let q = q0;
  for (; q + 4 <= q1; q += 4) xBlock(d, f, n, q * n);
  for (; q < q1; q++) xLine(d, f, n, q * n);
}

function xBlock(d: Float64Array, f: AxisFactor, n: number, b0: number): void {
  const { l, cp, inv } = f;
  const b1 = b0 + n, b2 = b1 + n, b3 = b2 + n;
  let y0 = d[b0] * inv[0], y1 = d[b1] * inv[0], y2 = d[b2] * inv[0], y3 = d[b3] * inv[0];
  d[b0] = y0; d[b1] = y1; d[b2] = y2; d[b3] = y3;
  for (let i = 1; i < n; i++) {
    const li = l[i];
    const ii = inv[i];
    y0 = (d[b0 + i] - li * y0) * ii; d[b0 + i] = y0;
    y1 = (d[b1 + i] - li * y1) * ii; d[b1 + i] = y1;
    y2 = (d[b2 + i] - li * y2) * ii; d[b2 + i] = y2;
    y3 = (d[b3 + i] - li * y3) * ii; d[b3 + i] = y3;
  }
  for (let i = n - 2; i >= 0; i--) {
    const p = cp[i];
    y0 = d[b0 + i] - p * y0; d[b0 + i] = y0;
    y1 = d[b1 + i] - p * y1; d[b1 + i] = y1;
    y2 = d[b2 + i] - p * y2; d[b2 + i] = y2;
    y3 = d[b3 + i] - p * y3; d[b3 + i] = y3;
  }
}

function xLine(d: Float64Array, f: AxisFactor, n: number, b: number): void {
  const { l, cp, inv } = f;
  let y = d[b] * inv[0];
  d[b] = y;
  for (let i = 1; i < n; i++) {
    y = (d[b + i] - l[i] * y) * inv[i];
    d[b + i] = y;
  }
  for (let i = n - 2; i >= 0; i--) {
    y = d[b + i] - cp[i] * y;
    d[b + i] = y;
  }
}

/**
 * Lines across contiguous memory: position t of line p is d[base + t·stride + p], for
 * p in [from, to), t in [0, n). All take the factor `f`; the inner loop runs along p, so the
 * recurrences of neighbouring lines proceed together.
 */
function linesAcross(d: Float64Array, base: number, stride: number, n: number, f: AxisFactor, from: number, to: number): void {
  const { l, cp, inv } = f;
  const i0 = inv[0];
  for (let p = base + from; p < base + to; p++) d[p] *= i0;
  for (let t = 1; t < n; t++) {
    const lt = l[t];
    const it = inv[t];
    const o = base + t * stride;
    const prev = o - stride;
    for (let p = from; p < to; p++) d[o + p] = (d[o + p] - lt * d[prev + p]) * it;
  }
  for (let t = n - 2; t >= 0; t--) {
    const pt = cp[t];
    const o = base + t * stride;
    const next = o + stride;
    for (let p = from; p < to; p++) d[o + p] -= pt * d[next + p];
  }
}

/**
 * One line factorised on its own (I − β·A with identity rows where `mask` is 1), solved in
 * place: position t at d[base + t·stride], its mask at mask[maskBase + t·maskStride].
 * The held positions are masked by arithmetic, not a branch (see variableLine in adi.ts).
 */
function maskedLine(d: Float64Array, base: number, stride: number, n: number, gPrev: Float64Array, gNext: Float64Array,
                    beta: number, mask: Uint8Array, maskBase: number, maskStride: number, cp: Float64Array): void {
  let y = 0;
  let cpPrev = 0;
  for (let t = 0; t < n; t++) {
    const free = 1 - mask[maskBase + t * maskStride];
    const lo = -beta * gPrev[t] * free;
    const up = -beta * gNext[t] * free;
    const inv = 1 / (1 - lo - up - lo * cpPrev);
    cpPrev = up * inv;
    cp[t] = cpPrev;
    const o = base + t * stride;
    y = (d[o] - lo * y) * inv;
    d[o] = y;
  }
  for (let t = n - 2; t >= 0; t--) {
    const o = base + t * stride;
    y = d[o] - cp[t] * y;
    d[o] = y;
  }
}


/** Runs every path, held and sealed, in both schemes, on a tiny domain (9 × 7 × 6), once per thread (primeOnce, priming.ts). */
function primeKernels3d(): void {
  const mesh = buildMesh3d(uniformAxis(0.9, 9), uniformAxis(0.7, 7), uniformAxis(0.5, 5));
  const stepper = new AdiStepper3d(mesh, buildMask3d(mesh, [[0.25, 0.15, 0.65, 0.45]]));
  const c = new Float64Array(mesh.nx * mesh.ny * mesh.nz);
  for (let r = 0; r < PRIMING_CALLS; r++) {
    for (const scheme of ['douglas-gunn', 'split-implicit'] as const) {
      stepper.holdSurface(c, 1.5e20);
      stepper.step(c, 1.5e-3, scheme, true);
      stepper.step(c, 1.5e-3, scheme, false);
    }
    stepper.bottomPlaneFinite(c);
  }
}

/** One row of (A(ν) c): x neighbours along the row (ends clamped), y and z at fixed offsets (0 at a wall). */
function variableResidualRow(c: Float64Array, out: Float64Array, nu: Float64Array, base: number, nx: number, ax: Float64Array, cx: Float64Array,
                             hym: number, hyp: number, hzm: number, hzp: number, ym: number, yp: number, zm: number, zp: number): void {
  for (let i = 0; i < nx; i++) {
    const o = base + i;
    const c0 = c[o];
    const n0 = nu[o];
    const xm = i > 0 ? o - 1 : o;
    const xp = i < nx - 1 ? o + 1 : o;
    out[o] = 0.5 * ax[i] * (nu[xm] + n0) * (c[xm] - c0) + 0.5 * cx[i] * (nu[xp] + n0) * (c[xp] - c0) +
      hym * (nu[o + ym] + n0) * (c[o + ym] - c0) + hyp * (nu[o + yp] + n0) * (c[o + yp] - c0) +
      hzm * (nu[o + zm] + n0) * (c[o + zm] - c0) + hzp * (nu[o + zp] + n0) * (c[o + zp] - c0);
  }
}

/**
 * One x row solved in place with (I − β·Ax(ν)), factorised as it goes; positions where
 * mask[maskBase + i·maskStride] is 1 are identity rows (stride 0 with a zero mask: none).
 */
function variableRow(d: Float64Array, nu: Float64Array, base: number, nx: number, gPrev: Float64Array, gNext: Float64Array, beta: number,
                     mask: Uint8Array, maskBase: number, maskStride: number, cp: Float64Array): void {
  let y = 0;
  let cpPrev = 0;
  for (let i = 0; i < nx; i++) {
    const o = base + i;
    const free = 1 - mask[maskBase + i * maskStride];
    const n0 = nu[o];
    const lo = i > 0 ? -beta * gPrev[i] * 0.5 * (nu[o - 1] + n0) * free : 0;
    const up = i < nx - 1 ? -beta * gNext[i] * 0.5 * (n0 + nu[o + 1]) * free : 0;
    const inv = 1 / (1 - lo - up - lo * cpPrev);
    cpPrev = up * inv;
    cp[i] = cpPrev;
    y = (d[o] - lo * y) * inv;
    d[o] = y;
  }
  for (let i = nx - 2; i >= 0; i--) {
    y = d[base + i] - cp[i] * y;
    d[base + i] = y;
  }
}

/**
 * The y lines of one plane (base), solved in place with (I − β·Ay(ν)), all lines of a row
 * at once; `cp` holds the plane's factors. Held positions as in variableRow (mask per node).
 */
function variableAcross(d: Float64Array, nu: Float64Array, base: number, nx: number, ny: number, gPrev: Float64Array, gNext: Float64Array,
                        beta: number, cp: Float64Array, maskBase: number, mask: Uint8Array, maskStride: number): void {
  for (let j = 0; j < ny; j++) {
    const o = base + j * nx;
    const bp = beta * 0.5 * gPrev[j];
    const bn = beta * 0.5 * gNext[j];
    const hasPrev = j > 0 ? 1 : 0;
    const hasNext = j < ny - 1 ? 1 : 0;
    const prev = hasPrev ? o - nx : o;
    const next = hasNext ? o + nx : o;
    const cpRow = j * nx;
    const cpPrevRow = hasPrev ? cpRow - nx : cpRow;
    for (let i = 0; i < nx; i++) {
      const free = 1 - mask[maskBase + (j * nx + i) * maskStride];
      const n0 = nu[o + i];
      const lo = -bp * (nu[prev + i] + n0) * free;
      const up = -bn * (n0 + nu[next + i]) * free;
      const cpBefore = hasPrev * cp[cpPrevRow + i];
      const inv = 1 / (1 - lo - up - lo * cpBefore);
      cp[cpRow + i] = up * inv;
      d[o + i] = (d[o + i] - lo * hasPrev * d[prev + i]) * inv;
    }
  }
  for (let j = ny - 2; j >= 0; j--) {
    const o = base + j * nx;
    for (let i = 0; i < nx; i++) d[o + i] -= cp[j * nx + i] * d[o + nx + i];
  }
}

/** Plane k's step of the z forward elimination with (I − β·Az(ν)); its factors kept in cpZ for the back substitution. */
function variableZForward(d: Float64Array, nu: Float64Array, k: number, plane: number, nz: number, gPrev: Float64Array, gNext: Float64Array,
                          beta: number, cpZ: Float64Array, mask: Uint8Array, maskStride: number): void {
  const o = k * plane;
  const hasPrev = k > 0 ? 1 : 0;
  const prev = hasPrev ? o - plane : o;
  const next = k < nz - 1 ? o + plane : o;
  const bp = beta * 0.5 * gPrev[k];
  const bn = beta * 0.5 * gNext[k];
  for (let p = 0; p < plane; p++) {
    const free = 1 - mask[p * maskStride];
    const n0 = nu[o + p];
    const lo = -bp * (nu[prev + p] + n0) * free;
    const up = -bn * (n0 + nu[next + p]) * free;
    const inv = 1 / (1 - lo - up - lo * hasPrev * cpZ[prev + p]);
    cpZ[o + p] = up * inv;
    d[o + p] = (d[o + p] - lo * hasPrev * d[prev + p]) * inv;
  }
}

/** d[o + p] −= cpZ[o + p]·d[next + p] over one plane. */
function substituteVariable(d: Float64Array, cpZ: Float64Array, o: number, next: number, plane: number): void {
  for (let p = 0; p < plane; p++) d[o + p] -= cpZ[o + p] * d[next + p];
}
