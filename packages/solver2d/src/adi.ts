import type { Mask, SurfaceSegment } from './mask.ts';
import type { Mesh } from './mesh.ts';
import { factorTridiagonal } from './tridiagonal.ts';

/**
 * Alternating-direction implicit stepper for ∂C/∂t = ∇·(D∇C) on the masked cross-section,
 * for one species with D uniform in space over the step (D may change between steps).
 *
 * Finite volumes: with Ax, Az the x and z parts of the discrete divergence (per unit D),
 *   (Ax C)_i = [g_{i+½}(C_{i+1} − C_i) − g_{i−½}(C_i − C_{i−1})] / Δx_i,  g = 1/(x_{i+1} − x_i),
 * zero flux through the side walls and the bottom, and at the surface either zero flux
 * (sealed, under the mask) or the surface node held at Cs (predeposition, in the windows).
 *
 * Schemes, with ν = D·τ:
 *   Peaceman–Rachford (second order):  (I − ν/2·Ax) C* = (I + ν/2·Az) Cⁿ,
 *                                       (I − ν/2·Az) Cⁿ⁺¹ = (I + ν/2·Ax) C*
 *   Douglas–Rachford (first order, strongly damped; for the first steps after a
 *   discontinuity):                     (I − ν·Ax) C* = (I + ν·Az) Cⁿ,
 *                                       (I − ν·Az) Cⁿ⁺¹ = C* − ν·Az Cⁿ
 * Both are conservative: Cⁿ⁺¹ − Cⁿ = ν·Ax C* + ν·Az C̄ with C̄ = (Cⁿ + Cⁿ⁺¹)/2 (PR) or
 * Cⁿ⁺¹ (DR), which is what the dose ledger uses to count what enters through the windows.
 *
 * Memory: the field is row-major, index j·nx + i (z rows, x contiguous). The x sweep runs
 * along contiguous rows; the z sweep runs down all columns at once, one contiguous row at a
 * time, with one factorisation per column kind (open with a held surface, or sealed).
 * Every buffer is allocated here; `step` allocates nothing.
 */
export type Scheme = 'peaceman-rachford' | 'douglas-rachford';

export class AdiStepper {
  readonly nx: number;
  readonly nz: number;
  private readonly ax: Float64Array;
  private readonly cx: Float64Array;
  private readonly az: Float64Array;
  private readonly cz: Float64Array;
  private readonly open: Uint8Array;
  private readonly segments: SurfaceSegment[];
  private readonly volumeX: Float64Array;
  private readonly volumeZ: Float64Array;
  // x-sweep factorisations: every row, and the surface row with held open cells
  private readonly xl: Float64Array;
  private readonly xlHeld: Float64Array;
  private readonly xcp: Float64Array;
  private readonly xinv: Float64Array;
  private readonly xcpHeld: Float64Array;
  private readonly xinvHeld: Float64Array;
  // z-sweep factorisations: sealed columns and held (open, predeposition) columns
  private readonly zl: Float64Array;
  private readonly zcp: Float64Array;
  private readonly zinv: Float64Array;
  private readonly zcpHeld: Float64Array;
  private readonly zinvHeld: Float64Array;
  // scratch for building the matrices
  private readonly lo: Float64Array;
  private readonly di: Float64Array;
  private readonly up: Float64Array;
  private readonly star: Float64Array;
  private readonly work: Float64Array;
  private readonly savedRows: Float64Array;

  constructor(mesh: Mesh, mask: Mask) {
    const { nx, nz, x, dx, z, dzVolume } = mesh;
    this.nx = nx;
    this.nz = nz;
    this.open = mask.open;
    this.segments = mask.segments;
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
    this.xl = new Float64Array(nx);
    this.xlHeld = new Float64Array(nx);
    this.xcp = new Float64Array(nx);
    this.xinv = new Float64Array(nx);
    this.xcpHeld = new Float64Array(nx);
    this.xinvHeld = new Float64Array(nx);
    this.zl = new Float64Array(nz);
    this.zcp = new Float64Array(nz);
    this.zinv = new Float64Array(nz);
    this.zcpHeld = new Float64Array(nz);
    this.zinvHeld = new Float64Array(nz);
    this.star = new Float64Array(nx * nz);
    this.work = new Float64Array(nx * nz);
    this.savedRows = new Float64Array(2 * nx);
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
   * Advances `c` by one step of length τ with ν = D·τ (µm²). `held` true holds the open
   * surface cells at `surfaceValue` (predeposition); false seals the whole surface.
   * Returns the atoms that entered through the held surface during the step (cm^-3·µm²).
   */
  step(c: Float64Array, nu: number, scheme: Scheme, held: boolean, surfaceValue: number): number {
    const nx = this.nx;
    if (held) this.savedRows.set(c.subarray(0, 2 * nx));
    if (scheme === 'peaceman-rachford') {
      const half = 0.5 * nu;
      this.factor(half, held);
      this.sweepX(c, half, held, surfaceValue);
      this.sweepZPeaceman(c, half, held, surfaceValue);
    } else {
      this.factor(nu, held);
      this.sweepX(c, nu, held, surfaceValue);
      this.sweepZDouglas(c, nu, held, surfaceValue);
    }
    return held ? this.inflow(c, nu, scheme) : 0;
  }

  /** Factorises I − β·Ax (rows) and I − β·Az (columns), sealed and held variants. */
  private factor(beta: number, held: boolean): void {
    const { nx, nz, ax, cx, az, cz, lo, di, up, open } = this;
    for (let i = 0; i < nx; i++) {
      lo[i] = -beta * ax[i];
      up[i] = -beta * cx[i];
      di[i] = 1 - lo[i] - up[i];
      this.xl[i] = lo[i];
    }
    factorTridiagonal(lo, di, up, this.xcp, this.xinv, nx);
    if (held) {
      for (let i = 0; i < nx; i++) {
        if (open[i] === 1) { lo[i] = 0; di[i] = 1; up[i] = 0; }
        this.xlHeld[i] = lo[i];
      }
      factorTridiagonal(lo, di, up, this.xcpHeld, this.xinvHeld, nx);
    }
    for (let j = 0; j < nz; j++) {
      lo[j] = -beta * az[j];
      up[j] = -beta * cz[j];
      di[j] = 1 - lo[j] - up[j];
      this.zl[j] = lo[j];
    }
    factorTridiagonal(lo, di, up, this.zcp, this.zinv, nz);
    if (held) {
      // Row 0 becomes the identity C₀ = Cs; row 1 keeps its coupling to the known C₀.
      lo[0] = 0; di[0] = 1; up[0] = 0;
      factorTridiagonal(lo, di, up, this.zcpHeld, this.zinvHeld, nz);
    }
  }

  /** C* = (I − β·Ax)⁻¹ (I + β·Az) Cⁿ, row by row, into `star`. */
  private sweepX(c: Float64Array, beta: number, held: boolean, surfaceValue: number): void {
    const { nx, nz, az, cz, star } = this;
    for (let j = 0; j < nz; j++) {
      const mid = j * nx;
      const above = j > 0 ? mid - nx : mid;
      const below = j < nz - 1 ? mid + nx : mid;
      const wa = beta * az[j];
      const wb = beta * cz[j];
      const wm = 1 - wa - wb;
      const surfaceHeld = held && j === 0;
      const xl = surfaceHeld ? this.xlHeld : this.xl;
      const xinv = surfaceHeld ? this.xinvHeld : this.xinv;
      const xcp = surfaceHeld ? this.xcpHeld : this.xcp;
      let y = 0;
      if (surfaceHeld) {
        const open = this.open;
        for (let i = 0; i < nx; i++) {
          const r = open[i] === 1 ? surfaceValue : wm * c[mid + i] + wa * c[above + i] + wb * c[below + i];
          y = (r - xl[i] * y) * xinv[i];
          star[mid + i] = y;
        }
      } else {
        for (let i = 0; i < nx; i++) {
          const r = wm * c[mid + i] + wa * c[above + i] + wb * c[below + i];
          y = (r - xl[i] * y) * xinv[i];
          star[mid + i] = y;
        }
      }
      for (let i = nx - 2; i >= 0; i--) {
        y = star[mid + i] - xcp[i] * y;
        star[mid + i] = y;
      }
    }
  }

  /** Cⁿ⁺¹ = (I − β·Az)⁻¹ (I + β·Ax) C*, all columns at once. */
  private sweepZPeaceman(c: Float64Array, beta: number, held: boolean, surfaceValue: number): void {
    const { nx, nz, ax, cx, star, work, zl, segments } = this;
    const last = nx - 1;
    for (let j = 0; j < nz; j++) {
      const mid = j * nx;
      const above = mid - nx;
      const l = zl[j];
      // right-hand side (I + β·Ax) C* of this row, into work
      work[mid] = star[mid] + beta * cx[0] * (star[mid + 1] - star[mid]);
      for (let i = 1; i < last; i++) {
        const s = star[mid + i];
        work[mid + i] = s + beta * (ax[i] * (star[mid + i - 1] - s) + cx[i] * (star[mid + i + 1] - s));
      }
      work[mid + last] = star[mid + last] + beta * ax[last] * (star[mid + last - 1] - star[mid + last]);
      this.forwardZRow(j, mid, above, l, held, surfaceValue, segments);
    }
    this.backZ(c, held);
  }

  /** Cⁿ⁺¹ = (I − β·Az)⁻¹ (C* − β·Az Cⁿ), all columns at once. */
  private sweepZDouglas(c: Float64Array, beta: number, held: boolean, surfaceValue: number): void {
    const { nx, nz, az, cz, star, work, zl, segments } = this;
    for (let j = 0; j < nz; j++) {
      const mid = j * nx;
      const above = j > 0 ? mid - nx : mid;
      const below = j < nz - 1 ? mid + nx : mid;
      const wa = beta * az[j];
      const wb = beta * cz[j];
      for (let i = 0; i < nx; i++) {
        const cm = c[mid + i];
        work[mid + i] = star[mid + i] - wa * (c[above + i] - cm) - wb * (c[below + i] - cm);
      }
      this.forwardZRow(j, mid, mid - nx, zl[j], held, surfaceValue, segments);
    }
    this.backZ(c, held);
  }

  /** Forward elimination of row j of the z systems, in place in `work`. */
  private forwardZRow(j: number, mid: number, above: number, l: number, held: boolean,
                      surfaceValue: number, segments: SurfaceSegment[]): void {
    const work = this.work;
    for (let s = 0; s < segments.length; s++) {
      const seg = segments[s];
      const heldColumn = held && seg.open;
      const inv = heldColumn ? this.zinvHeld[j] : this.zinv[j];
      const i1 = seg.i1;
      if (j === 0) {
        if (heldColumn) for (let i = seg.i0; i < i1; i++) work[i] = surfaceValue;
        else for (let i = seg.i0; i < i1; i++) work[i] *= inv;
      } else {
        for (let i = seg.i0; i < i1; i++) work[mid + i] = (work[mid + i] - l * work[above + i]) * inv;
      }
    }
  }

  /** Back substitution of the z systems from `work` into `c`. */
  private backZ(c: Float64Array, held: boolean): void {
    const { nx, nz, work, segments, zcp, zcpHeld } = this;
    const lastRow = (nz - 1) * nx;
    for (let i = 0; i < nx; i++) c[lastRow + i] = work[lastRow + i];
    for (let j = nz - 2; j >= 0; j--) {
      const mid = j * nx;
      const below = mid + nx;
      for (let s = 0; s < segments.length; s++) {
        const seg = segments[s];
        const cp = held && seg.open ? zcpHeld[j] : zcp[j];
        for (let i = seg.i0; i < seg.i1; i++) c[mid + i] = work[mid + i] - cp * c[below + i];
      }
    }
  }

  /**
   * Atoms that entered through the held surface cells during the step:
   * −ν·Σ_held V·(Ax C* + Az C̄), the negative of what the conservative operator removed
   * from the held nodes, which stay at Cs.
   */
  private inflow(c: Float64Array, nu: number, scheme: Scheme): number {
    const { nx, ax, cx, cz, open, star, savedRows, volumeX, volumeZ } = this;
    const pr = scheme === 'peaceman-rachford';
    let total = 0;
    for (let i = 0; i < nx; i++) {
      if (open[i] !== 1) continue;
      let divX = 0;
      if (i > 0) divX += ax[i] * (star[i - 1] - star[i]);
      if (i < nx - 1) divX += cx[i] * (star[i + 1] - star[i]);
      const c0 = pr ? 0.5 * (c[i] + savedRows[i]) : c[i];
      const c1 = pr ? 0.5 * (c[nx + i] + savedRows[nx + i]) : c[nx + i];
      const divZ = cz[0] * (c1 - c0);
      total -= nu * volumeX[i] * volumeZ[0] * (divX + divZ);
    }
    return total;
  }
}
