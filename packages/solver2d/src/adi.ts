import { buildMask, type Mask } from './mask.ts';
import { buildMesh, uniformAxis, type Mesh } from './mesh.ts';
import { PRIMING_CALLS, primeOnce } from './priming.ts';
import { factorTridiagonal } from './tridiagonal.ts';

/**
 * Alternating-direction implicit stepper for ∂C/∂t = ∇·(D∇C) on the masked cross-section,
 * for one species with D uniform in space over a time step (D may change between steps).
 *
 * Finite volumes: with Ax, Az the x and z parts of the discrete divergence (per unit D),
 *   (Ax C)_i = [g_{i+½}(C_{i+1} − C_i) − g_{i−½}(C_i − C_{i−1})] / Δx_i,  g = 1/(x_{i+1} − x_i),
 * zero flux through the side walls and the bottom, and at the surface either zero flux
 * (sealed) or the surface node held at Cs (predeposition, in the windows).
 *
 * Schemes, with ν = D·τ:
 *   Peaceman–Rachford, second order:   (I − ν/2·Ax) C* = (I + ν/2·Az) Cⁿ
 *                                       (I − ν/2·Az) Cⁿ⁺¹ = (I + ν/2·Ax) C*
 *   split implicit (one backward-Euler sweep per direction), first order and L-stable in
 *   each direction, for the first steps after a discontinuity, where Peaceman–Rachford
 *   would carry the stiffest modes on undamped (its amplification tends to ±1):
 *                                       (I − ν·Ax) C* = Cⁿ,   (I − ν·Az) Cⁿ⁺¹ = C*
 * Both are conservative: Cⁿ⁺¹ − Cⁿ = ν·Ax C* + ν·Az C̄ with C̄ = (Cⁿ + Cⁿ⁺¹)/2 or Cⁿ⁺¹,
 * which the dose ledger uses to count what enters through the held surface.
 *
 * Memory: the field is row-major, index j·nx + i (z rows, x contiguous); the intermediate
 * C* is stored transposed (i·nz + j). Each half step reads lines that are contiguous in
 * its source and writes its result transposed, so both sweeps run the same kernel along
 * contiguous memory, four lines at a time to overlap the four Thomas recurrences.
 * Every buffer is allocated here; `step` allocates nothing.
 */
export type Scheme = 'peaceman-rachford' | 'split-implicit';

/** One factorised tridiagonal matrix shared by every line of a kind (see tridiagonal.ts). */
interface LineFactor {
  l: Float64Array;
  cp: Float64Array;
  inv: Float64Array;
}

function lineFactor(n: number): LineFactor {
  return { l: new Float64Array(n), cp: new Float64Array(n), inv: new Float64Array(n) };
}

/** Lines of one half step: which factor each uses and where values are held. */
interface SweepSetup {
  /** points per line */
  n: number;
  /** number of lines */
  m: number;
  free: LineFactor;
  held: LineFactor;
  /** 1 where the line uses the held factor */
  kind: Uint8Array;
  /** positions along a held line whose value is the held value */
  heldAlong: Uint8Array;
  /** explicit coupling to the previous and next line, per line */
  wa: Float64Array;
  wb: Float64Array;
  /** the `heldAlong` of lines held at position 0 only (z columns), which blocks can take */
  heldFirstOnly: Uint8Array | null;
}

/**
 * Rows and columns on which ν is one value at every node (where no dopant has arrived, ν is
 * the background's): `rows[j]` = 1 for row j, `columns[i]` = 1 for column i.
 */
export interface UniformLines {
  nu: number;
  rows: Uint8Array;
  columns: Uint8Array;
}

/**
 * One variable-D half step's lines, as `variableSweep` and its kernels read them: the
 * layout and couplings are fixed for the mesh; β, e, the line kinds, the held value and the
 * flat lines are set for each step.
 */
interface VariableSetup {
  /** stride of ν from one line to the next, and along a line */
  nuLine: number;
  nuAlong: number;
  /** points per line, number of lines */
  n: number;
  m: number;
  /** coupling to the previous and next position along a line, and to the previous and next line */
  gPrev: Float64Array;
  gNext: Float64Array;
  hPrev: Float64Array;
  hNext: Float64Array;
  /** Thomas factors of the four lines of a block */
  cp: Float64Array;
  /** positions along a held line whose value is the held value */
  heldAlong: Uint8Array;
  /** a held line is held at position 0 only (z columns), which a block can take */
  firstOnly: boolean;
  /** the constant-D lines of the same sweep, for lines where ν is flat */
  shared: SweepSetup;
  ends: FlatEnds;
  /** this step: implicit and explicit weights, which lines are held, their value, flat lines */
  beta: number;
  e: number;
  kind: Uint8Array;
  heldValue: number;
  flat: Uint8Array | null;
}

export class AdiStepper {
  readonly nx: number;
  readonly nz: number;
  private readonly ax: Float64Array;
  private readonly cx: Float64Array;
  private readonly az: Float64Array;
  private readonly cz: Float64Array;
  private readonly open: Uint8Array;
  private readonly volumeX: Float64Array;
  private readonly volumeZ: Float64Array;
  /** x sweep: lines are z rows; z sweep: lines are x columns */
  private readonly xSweep: SweepSetup;
  private readonly zSweep: SweepSetup;
  private readonly noneHeldX: Uint8Array;
  private readonly surfaceRowKind: Uint8Array;
  private readonly openColumnKind: Uint8Array;
  private readonly sealedZKind: Uint8Array;
  private readonly lo: Float64Array;
  private readonly di: Float64Array;
  private readonly up: Float64Array;
  private readonly star: Float64Array;
  private readonly savedRows: Float64Array;
  /** Thomas factors of the four lines of a block, for variable D */
  /** per row (x sweep) and per column (z sweep): 1 where the line and both neighbours have one ν */
  private readonly flatRows: Uint8Array;
  private readonly flatColumns: Uint8Array;
  /** the variable-D x sweep (lines are z rows) and z sweep (lines are x columns) */
  private readonly xVariable: VariableSetup;
  private readonly zVariable: VariableSetup;

  /**
   * `variableD`: whether the solve will call stepVariable (a concentration-dependent D, or D
   * per node from a point-defect model); its kernels are primed only then.
   */
  constructor(mesh: Mesh, mask: Mask, { variableD = true }: { variableD?: boolean } = {}) {
    primeOnce(primeConstantKernels);
    if (variableD) primeOnce(primeVariableKernels);
    const { nx, nz, x, dx, z, dzVolume } = mesh;
    this.nx = nx;
    this.nz = nz;
    this.open = mask.open;
    this.volumeX = dx;
    this.volumeZ = dzVolume;
    this.ax = new Float64Array(nx);
    this.cx = new Float64Array(nx);
    for (let i = 0; i < nx; i++) {
      if (i > 0) this.ax[i] = 1 / ((x[i] - x[i - 1]) * dx[i]);
      if (i < nx - 1) this.cx[i] = 1 / ((x[i + 1] - x[i]) * dx[i]);
    }
    this.az = new Float64Array(nz);
    this.cz = new Float64Array(nz);
    for (let j = 0; j < nz; j++) {
      if (j > 0) this.az[j] = 1 / ((z[j] - z[j - 1]) * dzVolume[j]);
      if (j < nz - 1) this.cz[j] = 1 / ((z[j + 1] - z[j]) * dzVolume[j]);
    }
    const n = Math.max(nx, nz);
    this.lo = new Float64Array(n);
    this.di = new Float64Array(n);
    this.up = new Float64Array(n);
    this.noneHeldX = new Uint8Array(nz);
    this.surfaceRowKind = new Uint8Array(nz);
    this.surfaceRowKind[0] = 1;
    this.openColumnKind = mask.open;
    this.sealedZKind = new Uint8Array(nx);
    const zHeldAlong = new Uint8Array(nz);
    zHeldAlong[0] = 1;
    this.xSweep = {
      n: nx, m: nz, free: lineFactor(nx), held: lineFactor(nx), kind: this.noneHeldX,
      heldAlong: mask.open, wa: new Float64Array(nz), wb: new Float64Array(nz), heldFirstOnly: null,
    };
    this.zSweep = {
      n: nz, m: nx, free: lineFactor(nz), held: lineFactor(nz), kind: this.sealedZKind,
      heldAlong: zHeldAlong, wa: new Float64Array(nx), wb: new Float64Array(nx), heldFirstOnly: zHeldAlong,
    };
    this.star = new Float64Array(nx * nz);
    this.savedRows = new Float64Array(2 * nx);
    this.flatRows = new Uint8Array(nz);
    this.flatColumns = new Uint8Array(nx);
    const cp = new Float64Array(4 * n);
    const { ax, cx, az, cz } = this;
    this.xVariable = {
      nuLine: nx, nuAlong: 1, n: nx, m: nz, gPrev: ax, gNext: cx, hPrev: az, hNext: cz, cp, heldAlong: mask.open, firstOnly: false,
      shared: this.xSweep, ends: { lead: 0, left: this.xSweep.free, right: backwardFactor(nx) },
      beta: 0, e: 0, kind: this.noneHeldX, heldValue: 0, flat: null,
    };
    this.zVariable = {
      nuLine: 1, nuAlong: nx, n: nz, m: nx, gPrev: az, gNext: cz, hPrev: ax, hNext: cx, cp, heldAlong: zHeldAlong, firstOnly: true,
      shared: this.zSweep, ends: { lead: 0, left: this.zSweep.free, right: backwardFactor(nz) },
      beta: 0, e: 0, kind: this.sealedZKind, heldValue: 0, flat: null,
    };
  }

  /** Atoms per unit length of cross-section, in cm^-3·µm², i.e. Σ C·Δx·Δz. */
  content(c: Float64Array): number {
    const { nx, nz, volumeX, volumeZ } = this;
    let total = 0;
    for (let j = 0; j < nz; j++) {
      let row = 0;
      const base = j * nx;
      for (let i = 0; i < nx; i++) row += c[base + i] * volumeX[i];
      total += row * volumeZ[j];
    }
    return total;
  }

  /** True when every value of the bottom row is finite. A NaN or Inf anywhere reaches the
   *  bottom row within one step: the z sweep's forward elimination carries it down. */
  bottomRowFinite(c: Float64Array): boolean {
    const base = (this.nz - 1) * this.nx;
    let sum = 0;
    for (let i = 0; i < this.nx; i++) sum += c[base + i];
    return Number.isFinite(sum);
  }

  /**
   * Holds the open surface cells at `surfaceValue` and returns the atoms added by doing so
   * (cm^-3·µm²): the fill of the surface nodes when a predeposition starts.
   */
  holdSurface(c: Float64Array, surfaceValue: number): number {
    let added = 0;
    const v0 = this.volumeZ[0];
    for (let i = 0; i < this.nx; i++) {
      if (this.open[i] === 1) {
        added += (surfaceValue - c[i]) * this.volumeX[i] * v0;
        c[i] = surfaceValue;
      }
    }
    return added;
  }

  /**
   * Advances `c` by one step with ν = D·τ (µm²). `held` true holds the open surface cells at
   * `surfaceValue` (predeposition); false seals the whole surface. Returns the atoms that
   * entered through the held surface during the step (cm^-3·µm²).
   */
  step(c: Float64Array, nu: number, scheme: Scheme, held: boolean, surfaceValue: number): number {
    const pr = scheme === 'peaceman-rachford';
    const implicit = pr ? 0.5 * nu : nu;
    const explicit = pr ? 0.5 * nu : 0;
    if (held) this.savedRows.set(c.subarray(0, 2 * this.nx));
    this.prepare(implicit, explicit, held);
    sweepLines(c, this.star, this.xSweep, surfaceValue);
    sweepLines(this.star, c, this.zSweep, surfaceValue);
    return held ? this.inflow(c, null, nu, pr) : 0;
  }

  /**
   * The same step with D varying in space (concentration-dependent diffusion): `nu` holds
   * ν = D·τ at every node (row-major, like `c`); a face takes the mean of its two nodes.
   * Lines are factorised one at a time since no two share a matrix, except where `uniform`
   * says ν is one value on a line and on both its neighbours: every face such a line touches
   * has that ν, and the line is solved with the factor shared by all of them, as `step` does
   * (the same equations; the same result to rounding).
   */
  stepVariable(c: Float64Array, nu: Float64Array, scheme: Scheme, held: boolean, surfaceValue: number, uniform: UniformLines | null = null): number {
    const { nx, nz, ax, cx, az, cz, xVariable: xv, zVariable: zv } = this;
    const pr = scheme === 'peaceman-rachford';
    const implicit = pr ? 0.5 : 1;
    const explicit = pr ? 0.5 : 0;
    if (held) this.savedRows.set(c.subarray(0, 2 * nx));
    xv.beta = zv.beta = implicit;
    xv.e = zv.e = explicit;
    xv.heldValue = zv.heldValue = surfaceValue;
    xv.kind = held ? this.surfaceRowKind : this.noneHeldX;
    zv.kind = held ? this.openColumnKind : this.sealedZKind;
    xv.flat = zv.flat = null;
    const xEnds = xv.ends, zEnds = zv.ends;
    xEnds.lead = 0;
    xEnds.right.from = nx;
    zEnds.right.from = nz;
    if (uniform !== null) {
      // Shared factors for ν = uniform.nu; held lines keep their own path.
      this.prepare(implicit * uniform.nu, explicit * uniform.nu, false);
      xv.flat = flatLines(uniform.rows, xv.kind, this.flatRows);
      zv.flat = flatLines(uniform.columns, zv.kind, this.flatColumns);
      // Rows: flat columns at both ends; columns: flat rows at the bottom (row 0 takes the dopant).
      trailingFactor(zv.flat, implicit * uniform.nu, ax, cx, xEnds.right);
      xEnds.lead = leadingRun(zv.flat, xEnds.right.from);
      trailingFactor(xv.flat, implicit * uniform.nu, az, cz, zEnds.right);
    }
    // ν stays row-major for both sweeps: along a row (x sweep) consecutive, along a column
    // (z sweep) a row apart, where the four columns of a block read neighbouring values.
    variableSweep(c, this.star, nu, xv);
    variableSweep(this.star, c, nu, zv);
    return held ? this.inflow(c, nu, 1, pr) : 0;
  }

  /** Factorises I − β·Ax and I − β·Az (sealed and held variants) and sets the explicit part. */
  private prepare(beta: number, explicit: number, held: boolean): void {
    const { nx, nz, ax, cx, az, cz, lo, di, up, open, xSweep, zSweep } = this;
    const xl = xSweep.free.l, xwa = zSweep.wa, xwb = zSweep.wb;
    for (let i = 0; i < nx; i++) {
      const a = -beta * ax[i];
      const c = -beta * cx[i];
      lo[i] = a;
      up[i] = c;
      di[i] = 1 - a - c;
      xl[i] = a;
      xwa[i] = explicit * ax[i];
      xwb[i] = explicit * cx[i];
    }
    factorTridiagonal(lo, di, up, xSweep.free.cp, xSweep.free.inv, nx);
    if (held) {
      const hl = xSweep.held.l;
      for (let i = 0; i < nx; i++) {
        if (open[i] === 1) { lo[i] = 0; di[i] = 1; up[i] = 0; }
        hl[i] = lo[i];
      }
      factorTridiagonal(lo, di, up, xSweep.held.cp, xSweep.held.inv, nx);
    }
    const zl = zSweep.free.l, zhl = zSweep.held.l, zwa = xSweep.wa, zwb = xSweep.wb;
    for (let j = 0; j < nz; j++) {
      const a = -beta * az[j];
      const c = -beta * cz[j];
      lo[j] = a;
      up[j] = c;
      di[j] = 1 - a - c;
      zl[j] = a;
      zhl[j] = a;
      zwa[j] = explicit * az[j];
      zwb[j] = explicit * cz[j];
    }
    factorTridiagonal(lo, di, up, zSweep.free.cp, zSweep.free.inv, nz);
    if (held) {
      // Row 0 becomes the identity C₀ = Cs; row 1 keeps its coupling to the known C₀.
      lo[0] = 0; di[0] = 1; up[0] = 0;
      factorTridiagonal(lo, di, up, zSweep.held.cp, zSweep.held.inv, nz);
    }
    xSweep.kind = held ? this.surfaceRowKind : this.noneHeldX;
    zSweep.kind = held ? this.openColumnKind : this.sealedZKind;
  }

  /**
   * Atoms that entered through the held surface cells during the step:
   * −Σ_held V·(Ax(ν) C* + Az(ν) C̄), the negative of what the conservative operator removed
   * from the held nodes, which stay at Cs. `nu` holds ν per node (a face takes the mean of
   * its two nodes) and `scale` is 1; or `nu` is null and ν is `scale` everywhere.
   */
  private inflow(c: Float64Array, nu: Float64Array | null, scale: number, pr: boolean): number {
    const { nx, nz, ax, cx, cz, open, star, savedRows, volumeX, volumeZ } = this;
    let total = 0;
    for (let i = 0; i < nx; i++) {
      if (open[i] !== 1) continue;
      const s = star[i * nz];
      let divX = 0;
      if (i > 0) divX += (nu === null ? 1 : 0.5 * (nu[i - 1] + nu[i])) * ax[i] * (star[(i - 1) * nz] - s);
      if (i < nx - 1) divX += (nu === null ? 1 : 0.5 * (nu[i + 1] + nu[i])) * cx[i] * (star[(i + 1) * nz] - s);
      const c0 = pr ? 0.5 * (c[i] + savedRows[i]) : c[i];
      const c1 = pr ? 0.5 * (c[nx + i] + savedRows[nx + i]) : c[nx + i];
      total -= scale * volumeX[i] * volumeZ[0] * (divX + (nu === null ? 1 : 0.5 * (nu[i] + nu[nx + i])) * cz[0] * (c1 - c0));
    }
    return total;
  }
}

/**
 * Runs every path of the constant-D stepper, held and sealed, in both schemes, PRIMING_CALLS
 * times on a tiny cross-section (13 × 10 points: blocks of four lines, mixed blocks and
 * remainders), once per thread (primeOnce).
 */
function primeConstantKernels(): void {
  const { stepper, c } = primingCase(false);
  for (let r = 0; r < PRIMING_CALLS; r++) {
    for (const scheme of ['peaceman-rachford', 'split-implicit'] as const) {
      stepper.holdSurface(c, 1.5e20);
      stepper.step(c, 1.5e-3, scheme, true, 1.5e20);
      stepper.step(c, 1.5e-3, scheme, false, 0);
    }
    stepper.content(c);
    stepper.bottomRowFinite(c);
  }
}

/** The same for the variable-D stepper, with and without uniform lines, once per thread (primeOnce). */
function primeVariableKernels(): void {
  const { stepper, c, nu, uniform } = primingCase(true);
  for (let r = 0; r < PRIMING_CALLS; r++) {
    for (const scheme of ['peaceman-rachford', 'split-implicit'] as const) {
      stepper.holdSurface(c, 1.5e20);
      stepper.stepVariable(c, nu, scheme, true, 1.5e20);
      stepper.stepVariable(c, nu, scheme, false, 0);
      stepper.stepVariable(c, nu, scheme, true, 1.5e20, uniform);
      stepper.stepVariable(c, nu, scheme, false, 0, uniform);
    }
  }
}

function primingCase(variableD: boolean) {
  const mesh = buildMesh(uniformAxis(1.3, 13), uniformAxis(0.9, 9));
  const stepper = new AdiStepper(mesh, buildMask(mesh, [[0.35, 0.85]]), { variableD });
  const c = new Float64Array(mesh.nx * mesh.nz);
  const nu = new Float64Array(mesh.nx * mesh.nz);
  for (let k = 0; k < nu.length; k++) nu[k] = 1.5e-3 * (1 + (k % 3) * 0.25);
  // Rows 3–9 and columns 0–4 and 7–12 at one ν: flat blocks in both sweeps, flat runs at
  // both ends of the rows and at the bottom of the columns, lines uniform but not flat.
  const uniform: UniformLines = { nu: 1.5e-3, rows: new Uint8Array(mesh.nz), columns: new Uint8Array(mesh.nx) };
  uniform.rows.fill(1, 3);
  uniform.columns.fill(1, 0, 5);
  uniform.columns.fill(1, 7);
  for (let j = 0; j < mesh.nz; j++) {
    for (let i = 0; i < mesh.nx; i++) if (uniform.rows[j] === 1 || uniform.columns[i] === 1) nu[j * mesh.nx + i] = uniform.nu;
  }
  return { stepper, c, nu, uniform };
}

/**
 * One half step over every line: for line q (contiguous in `src` at q·n),
 *   (I − β·A_along) y = (1 − wa − wb)·s_q + wa·s_{q−1} + wb·s_{q+1},
 * solved with the line's factor and written transposed into `dst` at k·m + q.
 * Positions of a held line marked in `heldAlong` take `heldValue` (identity rows).
 */
function sweepLines(src: Float64Array, dst: Float64Array, s: SweepSetup, heldValue: number): void {
  const { m, kind } = s;
  const heldFirstOnly = s.heldAlong === s.heldFirstOnly;
  let q = 0;
  for (; q + 4 <= m; q += 4) {
    const k0 = kind[q];
    const uniform = k0 === kind[q + 1] && k0 === kind[q + 2] && k0 === kind[q + 3];
    if (uniform && k0 === 0) sweepBlock(src, dst, s, q, s.free, false, 0);
    else if (uniform && heldFirstOnly) sweepBlock(src, dst, s, q, s.held, true, heldValue);
    else for (let r = q; r < q + 4; r++) sweepLine(src, dst, s, r, heldValue);
  }
  for (; q < m; q++) sweepLine(src, dst, s, q, heldValue);
}

/**
 * Four neighbouring lines of one kind, their recurrences interleaved. Held lines here are
 * held at position 0 only, which is peeled off so that the loops carry no branch.
 */
function sweepBlock(src: Float64Array, dst: Float64Array, s: SweepSetup, q: number,
                    f: LineFactor, held: boolean, heldValue: number): void {
  const { n, m, wa, wb } = s;
  const { l, cp, inv } = f;
  const b0 = q * n, b1 = b0 + n, b2 = b1 + n, b3 = b2 + n;
  // At the first and last line the outer coupling is zero; any valid index will do.
  const before = q > 0 ? b0 - n : b0;
  const after = q + 4 < m ? b3 + n : b3;
  const a0 = wa[q], a1 = wa[q + 1], a2 = wa[q + 2], a3 = wa[q + 3];
  const c0 = wb[q], c1 = wb[q + 1], c2 = wb[q + 2], c3 = wb[q + 3];
  const m0 = 1 - a0 - c0, m1 = 1 - a1 - c1, m2 = 1 - a2 - c2, m3 = 1 - a3 - c3;
  // Position 0 has no predecessor; a held line holds it at the held value.
  let y0 = (m0 * src[b0] + a0 * src[before] + c0 * src[b1]) * inv[0];
  let y1 = (m1 * src[b1] + a1 * src[b0] + c1 * src[b2]) * inv[0];
  let y2 = (m2 * src[b2] + a2 * src[b1] + c2 * src[b3]) * inv[0];
  let y3 = (m3 * src[b3] + a3 * src[b2] + c3 * src[after]) * inv[0];
  if (held) y0 = y1 = y2 = y3 = heldValue;
  dst[q] = y0; dst[q + 1] = y1; dst[q + 2] = y2; dst[q + 3] = y3;
  for (let k = 1; k < n; k++) {
    const lk = l[k];
    const ik = inv[k];
    const s0 = src[b0 + k], s1 = src[b1 + k], s2 = src[b2 + k], s3 = src[b3 + k];
    y0 = (m0 * s0 + a0 * src[before + k] + c0 * s1 - lk * y0) * ik;
    y1 = (m1 * s1 + a1 * s0 + c1 * s2 - lk * y1) * ik;
    y2 = (m2 * s2 + a2 * s1 + c2 * s3 - lk * y2) * ik;
    y3 = (m3 * s3 + a3 * s2 + c3 * src[after + k] - lk * y3) * ik;
    const o = k * m + q;
    dst[o] = y0; dst[o + 1] = y1; dst[o + 2] = y2; dst[o + 3] = y3;
  }
  for (let k = n - 2; k >= 0; k--) {
    const p = cp[k];
    const o = k * m + q;
    y0 = dst[o] - p * y0; dst[o] = y0;
    y1 = dst[o + 1] - p * y1; dst[o + 1] = y1;
    y2 = dst[o + 2] - p * y2; dst[o + 2] = y2;
    y3 = dst[o + 3] - p * y3; dst[o + 3] = y3;
  }
}

/** One line on its own: the remainder of the blocks, blocks of mixed kind, the held surface row. */
function sweepLine(src: Float64Array, dst: Float64Array, s: SweepSetup, q: number, heldValue: number): void {
  const { n, m, wa, wb, heldAlong } = s;
  const held = s.kind[q] === 1;
  const { l, cp, inv } = held ? s.held : s.free;
  const base = q * n;
  const before = q > 0 ? base - n : base;
  const after = q < m - 1 ? base + n : base;
  const a = wa[q], c = wb[q], mid = 1 - a - c;
  let y = 0;
  for (let k = 0; k < n; k++) {
    // Held positions masked by arithmetic, as in variableLine (a branch here boxes doubles).
    const free = held ? 1 - heldAlong[k] : 1;
    const r = (mid * src[base + k] + a * src[before + k] + c * src[after + k]) * free + heldValue * (1 - free);
    y = (r - l[k] * y) * inv[k];
    dst[k * m + q] = y;
  }
  for (let k = n - 2; k >= 0; k--) {
    const o = k * m + q;
    y = dst[o] - cp[k] * y;
    dst[o] = y;
  }
}

/**
 * Every line of a variable-coefficient half step: blocks of four lines of one kind, the
 * rest (held lines of a row sweep, mixed blocks, the remainder) one at a time. `firstOnly`
 * says a held line is held at position 0 only, which a block can take.
 */
function variableSweep(src: Float64Array, dst: Float64Array, nu: Float64Array, v: VariableSetup): void {
  const { m, kind, heldAlong, firstOnly, flat, shared } = v;
  let q = 0;
  for (; q + 4 <= m; q += 4) {
    const k0 = kind[q];
    const sameKind = k0 === kind[q + 1] && k0 === kind[q + 2] && k0 === kind[q + 3];
    if (flat !== null && flat[q] + flat[q + 1] + flat[q + 2] + flat[q + 3] === 4) {
      sweepBlock(src, dst, shared, q, shared.free, false, 0);
    } else if (sameKind && (k0 === 0 || firstOnly)) {
      variableBlock(src, dst, nu, v, q, k0 === 1);
    } else {
      for (let r = q; r < q + 4; r++) variableLine(src, dst, nu, v, r, kind[r] === 1 ? heldAlong : null);
    }
  }
  for (; q < m; q++) variableLine(src, dst, nu, v, q, kind[q] === 1 ? heldAlong : null);
}

/**
 * The flat runs at the two ends of a sweep's lines (positions where ν is uniform across every
 * line, with their neighbours): there the line matrices are one matrix, whatever the line.
 * `lead` positions from the start take the shared factor eliminated forward (`left`, the
 * constant-D factor of the sweep); positions from `right.from` to the end take the shared
 * factor eliminated backward (`right`); only the positions between are factorised line by
 * line. No ends: lead 0 and right.from = n.
 */
interface FlatEnds {
  lead: number;
  left: LineFactor;
  right: BackwardFactor;
}

/**
 * A backward (end-to-start) elimination of the positions [from, n) of a line with uniform ν:
 * `up` the super-diagonal, `inv` the inverted pivots, `l` the sub-diagonal over the pivot.
 */
interface BackwardFactor {
  from: number;
  up: Float64Array;
  inv: Float64Array;
  l: Float64Array;
}

function backwardFactor(n: number): BackwardFactor {
  return { from: n, up: new Float64Array(n), inv: new Float64Array(n), l: new Float64Array(n) };
}

/**
 * Sets `out.from` to the start of the run of flat positions that ends the line (n where fewer
 * than four; position 0 never), and their backward factor for ν·β = `beta`.
 */
function trailingFactor(flat: Uint8Array, beta: number, gPrev: Float64Array, gNext: Float64Array, out: BackwardFactor): void {
  const n = flat.length;
  let from = n;
  while (from > 1 && flat[from - 1] === 1) from--;
  out.from = n - from >= 4 ? from : n;
  for (let k = n - 1; k >= out.from; k--) {
    const lo = -beta * gPrev[k];
    const up = -beta * gNext[k];
    const inv = 1 / (1 - lo - up - (k < n - 1 ? up * out.l[k + 1] : 0));
    out.up[k] = up;
    out.inv[k] = inv;
    out.l[k] = lo * inv;
  }
}

/** The number of flat positions that start the line, where at least four and short of its end. */
function leadingRun(flat: Uint8Array, end: number): number {
  let lead = 0;
  while (lead < end - 1 && flat[lead] === 1) lead++;
  return lead >= 4 ? lead : 0;
}

/**
 * Lines that can take the shared factor: ν uniform on the line and on both neighbours (a
 * line at the edge has one), and not held. Returns `out`.
 */
function flatLines(uniform: Uint8Array, kind: Uint8Array, out: Uint8Array): Uint8Array {
  const m = out.length;
  for (let q = 0; q < m; q++) {
    const before = q > 0 ? uniform[q - 1] : 1;
    const after = q < m - 1 ? uniform[q + 1] : 1;
    out[q] = uniform[q] === 1 && before === 1 && after === 1 && kind[q] === 0 ? 1 : 0;
  }
  return out;
}

/**
 * One line of a variable-coefficient half step. Line q of `src` (contiguous, n points,
 * m lines) with ν per node in the same layout `nu`:
 *   (I − β·A_along(ν)) y = s_q + e·A_across(ν) s  at every position k,
 * faces taking the mean ν of their two nodes; the result goes transposed into `dst`.
 * `held` marks positions held at `heldValue` (identity rows), or is null.
 */
function variableLine(src: Float64Array, dst: Float64Array, nu: Float64Array, v: VariableSetup, q: number, held: Uint8Array | null): void {
  const { nuLine, nuAlong, n, m, gPrev, gNext, hPrev, hNext, beta, e, cp, heldValue } = v;
  const base = q * n;
  const before = q > 0 ? base - n : base;
  const after = q < m - 1 ? base + n : base;
  const nb = q * nuLine;
  const nBefore = q > 0 ? nb - nuLine : nb;
  const nAfter = q < m - 1 ? nb + nuLine : nb;
  const wa = e * hPrev[q];
  const wb = e * hNext[q];
  let y = 0;
  let cpPrev = 0;
  let nuPrev = nu[nb];
  for (let k = 0; k < n; k++) {
    const ka = k * nuAlong;
    const nk = nu[nb + ka];
    const nNext = k < n - 1 ? nu[nb + ka + nuAlong] : nk;
    const sk = src[base + k];
    // A held position is an identity row: free = 0 there, 1 elsewhere. Arithmetic, not a
    // branch: a branch here made the loop box its doubles (a scavenge every few steps). A NaN
    // beside a held position now reaches it too (NaN·0); the finite guard stops the run either way.
    const free = held === null ? 1 : 1 - held[k];
    const lo = -beta * gPrev[k] * 0.5 * (nuPrev + nk) * free;
    const up = -beta * gNext[k] * 0.5 * (nk + nNext) * free;
    const r = (sk + wa * 0.5 * (nu[nBefore + ka] + nk) * (src[before + k] - sk) + wb * 0.5 * (nu[nAfter + ka] + nk) * (src[after + k] - sk)) * free +
      heldValue * (1 - free);
    const inv = 1 / (1 - lo - up - lo * cpPrev);
    cpPrev = up * inv;
    cp[k] = cpPrev;
    y = (r - lo * y) * inv;
    dst[k * m + q] = y;
    nuPrev = nk;
  }
  for (let k = n - 2; k >= 0; k--) {
    const o = k * m + q;
    y = dst[o] - cp[k] * y;
    dst[o] = y;
  }
}

/**
 * Four neighbouring lines of a variable-coefficient half step, their recurrences
 * interleaved (the division of each Thomas step would otherwise stall the next). Same
 * equations as `variableLine`; a held block is held at position 0 only. The fluxes
 * across the five faces between and around the four lines are computed once and shared,
 * and ν along each line is carried from one position to the next. Flat runs at the ends
 * (see FlatEnds) take the shared factors: forward over the leading run, line by line over
 * the middle, backward over the trailing run, the two eliminations joined at the last middle
 * position, then substituted back out from there.
 */
function variableBlock(src: Float64Array, dst: Float64Array, nu: Float64Array, v: VariableSetup, q: number, heldFirst: boolean): void {
  const { nuLine, nuAlong, n, m, gPrev, gNext, hPrev, hNext, beta, e, cp, heldValue } = v;
  const { lead, left, right } = v.ends;
  const end = right.from;
  const b0 = q * n, b1 = b0 + n, b2 = b1 + n, b3 = b2 + n;
  const bb = q > 0 ? b0 - n : b0;
  const ba = q + 4 < m ? b3 + n : b3;
  const u0 = q * nuLine, u1 = u0 + nuLine, u2 = u1 + nuLine, u3 = u2 + nuLine;
  const ub = q > 0 ? u0 - nuLine : u0;
  const ua = q + 4 < m ? u3 + nuLine : u3;
  const half = 0.5 * e;
  const wa0 = half * hPrev[q + 0], wb0 = half * hNext[q + 0];
  const wa1 = half * hPrev[q + 1], wb1 = half * hNext[q + 1];
  const wa2 = half * hPrev[q + 2], wb2 = half * hNext[q + 2];
  const wa3 = half * hPrev[q + 3], wb3 = half * hNext[q + 3];
  // On the flat runs every face has their one ν: the across fluxes are 2ν·(difference)·w.
  const flat = 2 * nu[u0 + (lead > 0 ? 0 : end < n ? end * nuAlong : 0)];
  const ea0 = wa0 * flat, eb0 = wb0 * flat, ea1 = wa1 * flat, eb1 = wb1 * flat;
  const ea2 = wa2 * flat, eb2 = wb2 * flat, ea3 = wa3 * flat, eb3 = wb3 * flat;
  let y0 = 0, y1 = 0, y2 = 0, y3 = 0;
  let p0 = 0, p1 = 0, p2 = 0, p3 = 0;
  for (let k = 0; k < lead; k++) {
    const lk = left.l[k];
    const ik = left.inv[k];
    const sb = src[bb + k], sa = src[ba + k];
    const s0 = src[b0 + k], s1 = src[b1 + k], s2 = src[b2 + k], s3 = src[b3 + k];
    y0 = (s0 + eb0 * (s1 - s0) - ea0 * (s0 - sb) - lk * y0) * ik;
    y1 = (s1 + eb1 * (s2 - s1) - ea1 * (s1 - s0) - lk * y1) * ik;
    y2 = (s2 + eb2 * (s3 - s2) - ea2 * (s2 - s1) - lk * y2) * ik;
    y3 = (s3 + eb3 * (sa - s3) - ea3 * (s3 - s2) - lk * y3) * ik;
    const o = k * m + q;
    dst[o] = y0; dst[o + 1] = y1; dst[o + 2] = y2; dst[o + 3] = y3;
  }
  if (lead > 0) p0 = p1 = p2 = p3 = left.cp[lead - 1];
  const before = lead > 0 ? (lead - 1) * nuAlong : 0;
  let v0 = nu[u0 + before], n0 = nu[u0 + lead * nuAlong];
  let v1 = nu[u1 + before], n1 = nu[u1 + lead * nuAlong];
  let v2 = nu[u2 + before], n2 = nu[u2 + lead * nuAlong];
  let v3 = nu[u3 + before], n3 = nu[u3 + lead * nuAlong];
  let first = lead;
  if (heldFirst) {
    // Position 0 is held: an identity row. Peeled off here, so that the loop carries no
    // branch (a branch in it, taken once a call, made the loop box its doubles: half the speed).
    y0 = y1 = y2 = y3 = heldValue;
    cp[0] = cp[1] = cp[2] = cp[3] = 0;
    dst[q] = dst[q + 1] = dst[q + 2] = dst[q + 3] = heldValue;
    const next = n > 1 ? nuAlong : 0;
    n0 = nu[u0 + next]; n1 = nu[u1 + next]; n2 = nu[u2 + next]; n3 = nu[u3 + next];
    first = 1;
  }
  for (let k = first; k < end; k++) {
    const ka = k * nuAlong;
    const kn = k < n - 1 ? ka + nuAlong : ka;
    const gp = 0.5 * beta * gPrev[k];
    const gn = 0.5 * beta * gNext[k];
    const sb = src[bb + k], sa = src[ba + k];
    const s0 = src[b0 + k], s1 = src[b1 + k], s2 = src[b2 + k], s3 = src[b3 + k];
    // ν̄·(difference) across the faces below line 0, between the lines, above line 3
    const f0 = (nu[ub + ka] + n0) * (s0 - sb);
    const f1 = (n0 + n1) * (s1 - s0);
    const f2 = (n1 + n2) * (s2 - s1);
    const f3 = (n2 + n3) * (s3 - s2);
    const f4 = (n3 + nu[ua + ka]) * (sa - s3);
    const x0 = nu[u0 + kn];
    const lo0 = -gp * (v0 + n0);
    const up0 = -gn * (n0 + x0);
    const r0 = s0 + wb0 * f1 - wa0 * f0;
    v0 = n0;
    n0 = x0;
    const x1 = nu[u1 + kn];
    const lo1 = -gp * (v1 + n1);
    const up1 = -gn * (n1 + x1);
    const r1 = s1 + wb1 * f2 - wa1 * f1;
    v1 = n1;
    n1 = x1;
    const x2 = nu[u2 + kn];
    const lo2 = -gp * (v2 + n2);
    const up2 = -gn * (n2 + x2);
    const r2 = s2 + wb2 * f3 - wa2 * f2;
    v2 = n2;
    n2 = x2;
    const x3 = nu[u3 + kn];
    const lo3 = -gp * (v3 + n3);
    const up3 = -gn * (n3 + x3);
    const r3 = s3 + wb3 * f4 - wa3 * f3;
    v3 = n3;
    n3 = x3;
    const i0 = 1 / (1 - lo0 - up0 - lo0 * p0);
    p0 = up0 * i0;
    y0 = (r0 - lo0 * y0) * i0;
    const i1 = 1 / (1 - lo1 - up1 - lo1 * p1);
    p1 = up1 * i1;
    y1 = (r1 - lo1 * y1) * i1;
    const i2 = 1 / (1 - lo2 - up2 - lo2 * p2);
    p2 = up2 * i2;
    y2 = (r2 - lo2 * y2) * i2;
    const i3 = 1 / (1 - lo3 - up3 - lo3 * p3);
    p3 = up3 * i3;
    y3 = (r3 - lo3 * y3) * i3;
    const c = 4 * k;
    cp[c] = p0; cp[c + 1] = p1; cp[c + 2] = p2; cp[c + 3] = p3;
    const o = k * m + q;
    dst[o] = y0; dst[o + 1] = y1; dst[o + 2] = y2; dst[o + 3] = y3;
  }
  if (end < n) {
    // The trailing run, backward from the last position.
    let z0 = 0, z1 = 0, z2 = 0, z3 = 0;
    for (let k = n - 1; k >= end; k--) {
      const uk = right.up[k];
      const ik = right.inv[k];
      const sb = src[bb + k], sa = src[ba + k];
      const s0 = src[b0 + k], s1 = src[b1 + k], s2 = src[b2 + k], s3 = src[b3 + k];
      z0 = (s0 + eb0 * (s1 - s0) - ea0 * (s0 - sb) - uk * z0) * ik;
      z1 = (s1 + eb1 * (s2 - s1) - ea1 * (s1 - s0) - uk * z1) * ik;
      z2 = (s2 + eb2 * (s3 - s2) - ea2 * (s2 - s1) - uk * z2) * ik;
      z3 = (s3 + eb3 * (sa - s3) - ea3 * (s3 - s2) - uk * z3) * ik;
      const o = k * m + q;
      dst[o] = z0; dst[o + 1] = z1; dst[o + 2] = z2; dst[o + 3] = z3;
    }
    // Joined at end − 1: C = y − p·C_end there and C_end = z − l·C there.
    const le = right.l[end];
    y0 = (y0 - p0 * z0) / (1 - p0 * le);
    y1 = (y1 - p1 * z1) / (1 - p1 * le);
    y2 = (y2 - p2 * z2) / (1 - p2 * le);
    y3 = (y3 - p3 * z3) / (1 - p3 * le);
    const oj = (end - 1) * m + q;
    dst[oj] = y0; dst[oj + 1] = y1; dst[oj + 2] = y2; dst[oj + 3] = y3;
    let w0 = y0, w1 = y1, w2 = y2, w3 = y3;
    for (let k = end; k < n; k++) {
      const lk = right.l[k];
      const o = k * m + q;
      w0 = dst[o + 0] - lk * w0; dst[o + 0] = w0;
      w1 = dst[o + 1] - lk * w1; dst[o + 1] = w1;
      w2 = dst[o + 2] - lk * w2; dst[o + 2] = w2;
      w3 = dst[o + 3] - lk * w3; dst[o + 3] = w3;
    }
  }
  // Back to the start: C_k = y_k − p_k·C_{k+1}, with each line's p over the middle and the shared one over the lead.
  for (let k = end - 2; k >= lead; k--) {
    const c = 4 * k;
    const o = k * m + q;
    y0 = dst[o + 0] - cp[c + 0] * y0; dst[o + 0] = y0;
    y1 = dst[o + 1] - cp[c + 1] * y1; dst[o + 1] = y1;
    y2 = dst[o + 2] - cp[c + 2] * y2; dst[o + 2] = y2;
    y3 = dst[o + 3] - cp[c + 3] * y3; dst[o + 3] = y3;
  }
  for (let k = Math.min(end - 2, lead - 1); k >= 0; k--) {
    const pk = left.cp[k];
    const o = k * m + q;
    y0 = dst[o + 0] - pk * y0; dst[o + 0] = y0;
    y1 = dst[o + 1] - pk * y1; dst[o + 1] = y1;
    y2 = dst[o + 2] - pk * y2; dst[o + 2] = y2;
    y3 = dst[o + 3] - pk * y3; dst[o + 3] = y3;
  }
}
