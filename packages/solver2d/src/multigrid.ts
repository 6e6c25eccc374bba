/**
 * Conjugate gradients preconditioned by one multigrid V-cycle, for the symmetric five-point
 * systems of a tensor mesh of nodes (nx columns, nz rows, row-major [z][x]):
 *   diag_k·u_k − tx_{k−1}·u_{k−1} − tx_k·u_{k+1} − tz_{k−nx}·u_{k−nx} − tz_k·u_{k+nx} = b_k,
 * with Dirichlet nodes (`fixed` = 1) whose update is zero (their rows and couplings dropped).
 *
 * Line relaxation along z (each column solved exactly by the Thomas algorithm, columns swept
 * in turn) with coarsening in x only: the smoother removes every error that varies slowly
 * along x, however strong the z-coupling, and the coarse columns every error that varies
 * slowly along x, however strong the x-coupling, so stretched cells of either orientation
 * cost no more iterations (semicoarsening with line relaxation; Dendy, Applied Math. and
 * Computation 10 (1982); Schaffer, SIAM J. Sci. Comput. 20 (1998) 228; from memory). A coarse
 * level keeps every other column; its operator is the fine one with the dropped columns'
 * x-couplings in series and their z-couplings and diagonal excess shared between the two
 * neighbours by the interpolation weights (linear in x), which keeps it five-point, symmetric
 * and diagonally dominant. Forward sweeps before the coarse correction and backward after,
 * restriction the transpose of interpolation: the V-cycle is a symmetric positive definite
 * preconditioner, as conjugate gradients needs.
 *
 * Inside, vectors are stored column by column (k = i·nz + j), so that the line solves run
 * along contiguous memory; `setup` and `solve` take and give row-major arrays. Every buffer is
 * sized in the constructor; `setup`, `apply` and `solve` allocate nothing.
 */

interface Level {
  nx: number;
  nz: number;
  diag: Float64Array;
  /** coupling of node k to the next along x (k + nz) / along z (k + 1), zero to and from fixed nodes */
  ax: Float64Array;
  az: Float64Array;
  /** diagonal excess over the couplings (reaction term and couplings to fixed nodes) */
  excess: Float64Array;
  /** Thomas factors of each column: 1/pivot and az/pivot */
  pivotInverse: Float64Array;
  up: Float64Array;
  fixed: Uint8Array;
  x: Float64Array;
  b: Float64Array;
  residual: Float64Array;
  /** for a coarse level: the column of the finer level under each of its columns */
  columns: Int32Array;
  /** for each column of this level, when coarsened: its left and right coarse columns and their weights */
  left: Int32Array;
  right: Int32Array;
  leftWeight: Float64Array;
  rightWeight: Float64Array;
}

/** Below this many columns, a level is not coarsened further. */
const COARSEST_COLUMNS = 3;
/** Symmetric sweep pairs on the coarsest level. */
const COARSEST_SWEEPS = 4;
/** Numbers below this are flushed to zero (subnormals are slow; a line solve decays geometrically through a heavily doped region). */
const FLUSH = 1e-200;

function flush(v: number): number {
  return v > FLUSH || v < -FLUSH ? v : 0;
}

function makeLevel(nx: number, nz: number, fixed: Uint8Array, coarsened: boolean): Level {
  const n = nx * nz;
  const buf = () => new Float64Array(n);
  const m = coarsened ? nx : 0;
  return {
    nx, nz, diag: buf(), ax: buf(), az: buf(), excess: buf(), pivotInverse: buf(), up: buf(), fixed,
    x: buf(), b: buf(), residual: buf(), columns: new Int32Array(0),
    left: new Int32Array(m), right: new Int32Array(m), leftWeight: new Float64Array(m), rightWeight: new Float64Array(m),
  };
}

export class FivePointMultigrid {
  readonly nx: number;
  readonly nz: number;
  readonly n: number;
  private readonly levels: Level[] = [];
  /** conjugate-gradient vectors, column by column */
  private readonly r: Float64Array;
  private readonly z: Float64Array;
  private readonly p: Float64Array;
  private readonly q: Float64Array;
  private readonly u: Float64Array;

  /**
   * @param x column positions (any unit; only their ratios are used, for interpolation)
   * @param nz rows
   * @param fixed 1 at Dirichlet nodes, row-major [z][x]
   */
  constructor(x: Float64Array, nz: number, fixed: Uint8Array) {
    const nx = x.length;
    this.nx = nx;
    this.nz = nz;
    this.n = nx * nz;
    let positions = Float64Array.from(x);
    let levelFixed = new Uint8Array(this.n);
    for (let j = 0; j < nz; j++) for (let i = 0; i < nx; i++) levelFixed[i * nz + j] = fixed[j * nx + i];
    let width = nx;
    let fineColumns = new Int32Array(0);
    for (;;) {
      const coarse = width > COARSEST_COLUMNS ? Math.floor((width + 2) / 2) : 0;
      const level = makeLevel(width, nz, levelFixed, coarse > 0);
      level.columns = fineColumns;
      this.levels.push(level);
      if (coarse === 0) break;
      // Coarse columns: the even ones and the last.
      const columns = new Int32Array(coarse);
      let c = 0;
      for (let i = 0; i < width; i += 2) columns[c++] = i;
      if ((width - 1) % 2 === 1) columns[c++] = width - 1;
      for (let I = 0; I < c; I++) {
        const f = columns[I];
        level.left[f] = I; level.right[f] = I; level.leftWeight[f] = 1; level.rightWeight[f] = 0;
        if (I + 1 < c && columns[I + 1] === f + 2) {
          const m = f + 1;
          const span = positions[f + 2] - positions[f];
          level.left[m] = I; level.right[m] = I + 1;
          level.leftWeight[m] = span > 0 ? (positions[f + 2] - positions[m]) / span : 0.5;
          level.rightWeight[m] = 1 - level.leftWeight[m];
        }
      }
      const coarseFixed = new Uint8Array(c * nz);
      for (let I = 0; I < c; I++) for (let j = 0; j < nz; j++) coarseFixed[I * nz + j] = levelFixed[columns[I] * nz + j];
      positions = Float64Array.from(columns, (i) => positions[i]);
      levelFixed = coarseFixed;
      width = c;
      fineColumns = columns;
    }
    const buf = () => new Float64Array(this.n);
    this.r = buf(); this.z = buf(); this.p = buf(); this.q = buf(); this.u = buf();
  }

  /** Number of levels (for tests and benchmarks). */
  get depth(): number {
    return this.levels.length;
  }

  /**
   * Takes the operator, row-major: `diag` per node, `tx` the coupling of node k to k+1
   * (ignored at the end of a row), `tz` of node k to k+nx. Fixed rows become identity rows.
   */
  setup(diag: Float64Array, tx: Float64Array, tz: Float64Array): void {
    const top = this.levels[0];
    takeOperator(top, diag, tx, tz);
    fillExcess(top);
    factorColumns(top);
    for (let l = 1; l < this.levels.length; l++) {
      coarsen(this.levels[l - 1], this.levels[l]);
      factorColumns(this.levels[l]);
    }
  }

  /** z = M⁻¹·r, one V-cycle, column by column (r zero at fixed nodes). */
  private apply(r: Float64Array, z: Float64Array): void {
    const top = this.levels[0];
    top.b.set(r);
    this.cycle(0);
    z.set(top.x);
  }

  private cycle(l: number): void {
    const level = this.levels[l];
    level.x.fill(0);
    if (l === this.levels.length - 1) {
      for (let s = 0; s < COARSEST_SWEEPS; s++) {
        sweepForward(level);
        sweepBackward(level);
      }
      return;
    }
    const coarse = this.levels[l + 1];
    sweepForward(level);
    residualAfterSweep(level);
    restrict(level, coarse);
    this.cycle(l + 1);
    prolong(level, coarse);
    sweepBackward(level);
  }

  /**
   * Conjugate gradients on A·x = b, row-major (b's fixed rows taken as zero; x starts at
   * zero and is zero at fixed nodes), until the preconditioned residual rᵀM⁻¹r falls by
   * tolerance²; returns the iterations. Call `setup` first.
   */
  solve(b: Float64Array, x: Float64Array, tolerance: number, maxIterations = 4 * this.n + 50): number {
    const { r, z, p, q, u } = this;
    const top = this.levels[0];
    toColumns(b, r, this.nx, this.nz);
    u.fill(0);
    if (freeRows(r, top.fixed) === 0) {
      x.fill(0);
      return 0;
    }
    this.apply(r, z);
    p.set(z);
    let rz = dot(r, z);
    const target = rz * tolerance * tolerance;
    let it = 0;
    for (it = 1; it <= maxIterations; it++) {
      multiplyLevel(top, p, q);
      const alpha = rz / dot(p, q);
      updateSolution(u, r, p, q, alpha);
      this.apply(r, z);
      const rzNext = dot(r, z);
      if (rzNext <= target) break;
      updateDirection(p, z, rzNext / rz);
      rz = rzNext;
    }
    toRows(u, x, this.nx, this.nz);
    return it;
  }
}

// Each loop is a function of its own: a loop compiled mid-call deoptimises on later calls.

function toColumns(rows: Float64Array, columns: Float64Array, nx: number, nz: number): void {
  for (let j = 0; j < nz; j++) for (let i = 0; i < nx; i++) columns[i * nz + j] = rows[j * nx + i];
}

function toRows(columns: Float64Array, rows: Float64Array, nx: number, nz: number): void {
  for (let j = 0; j < nz; j++) for (let i = 0; i < nx; i++) rows[j * nx + i] = columns[i * nz + j];
}

/** The finest level's operator from row-major arrays, couplings to and from fixed nodes dropped. */
function takeOperator(level: Level, diag: Float64Array, tx: Float64Array, tz: Float64Array): void {
  const { nx, nz, fixed, ax, az } = level;
  for (let i = 0; i < nx; i++) {
    for (let j = 0; j < nz; j++) {
      const k = i * nz + j;
      const g = j * nx + i;
      const free = fixed[k] === 0;
      ax[k] = free && i + 1 < nx && fixed[k + nz] === 0 ? tx[g] : 0;
      az[k] = free && j + 1 < nz && fixed[k + 1] === 0 ? tz[g] : 0;
      level.diag[k] = free ? diag[g] : 1;
    }
  }
}

function fillExcess(level: Level): void {
  const { nz, diag, ax, az, fixed, excess } = level;
  const n = diag.length;
  for (let k = 0; k < n; k++) {
    if (fixed[k] === 1) { excess[k] = 0; continue; }
    let s = ax[k] + az[k];
    if (k >= nz) s += ax[k - nz];
    if (k % nz > 0) s += az[k - 1];
    const e = diag[k] - s;
    excess[k] = e > 0 ? e : 0;
  }
}

/** The Thomas factors of every column: pivots of the tridiagonal (diag, −az) along z. */
function factorColumns(level: Level): void {
  const { nx, nz, diag, az, pivotInverse, up } = level;
  for (let i = 0; i < nx; i++) {
    let previousUp = 0;
    let previousAz = 0;
    const start = i * nz;
    for (let k = start; k < start + nz; k++) {
      const inv = 1 / (diag[k] - previousAz * previousUp);
      pivotInverse[k] = inv;
      previousUp = az[k] * inv;
      up[k] = previousUp;
      previousAz = az[k];
    }
  }
}

/** The coarse operator of `coarse` from `fine` (see the file's head). */
function coarsen(fine: Level, coarse: Level): void {
  const { nx: fx, nz, ax, az, excess, left, right, leftWeight, rightWeight } = fine;
  const cx = coarse.nx;
  const { columns, fixed } = coarse;
  coarse.az.fill(0);
  coarse.excess.fill(0);
  for (let i = 0; i < fx; i++) {
    addColumn(az, coarse.az, i * nz, left[i] * nz, leftWeight[i], nz);
    addColumn(excess, coarse.excess, i * nz, left[i] * nz, leftWeight[i], nz);
    if (rightWeight[i] > 0) {
      addColumn(az, coarse.az, i * nz, right[i] * nz, rightWeight[i], nz);
      addColumn(excess, coarse.excess, i * nz, right[i] * nz, rightWeight[i], nz);
    }
  }
  for (let I = 0; I < cx; I++) {
    const f = columns[I];
    for (let j = 0; j < nz; j++) {
      const k = I * nz + j;
      if (I + 1 === cx) { coarse.ax[k] = 0; continue; }
      const a = ax[f * nz + j];
      if (columns[I + 1] === f + 1) { coarse.ax[k] = a; continue; }
      const b = ax[(f + 1) * nz + j];
      coarse.ax[k] = a > 0 && b > 0 ? (a * b) / (a + b) : 0;
    }
  }
  const n = cx * nz;
  for (let k = 0; k < n; k++) {
    if (fixed[k] === 0) continue;
    coarse.ax[k] = 0;
    coarse.az[k] = 0;
    if (k >= nz) coarse.ax[k - nz] = 0;
    if (k % nz > 0) coarse.az[k - 1] = 0;
  }
  coarseDiagonal(coarse);
}

function addColumn(from: Float64Array, to: Float64Array, start: number, target: number, weight: number, nz: number): void {
  for (let j = 0; j < nz; j++) to[target + j] += weight * from[start + j];
}

function coarseDiagonal(level: Level): void {
  const { nz, diag, ax, az, excess, fixed } = level;
  const n = diag.length;
  for (let k = 0; k < n; k++) {
    if (fixed[k] === 1) { diag[k] = 1; continue; }
    let s = excess[k] + ax[k] + az[k];
    if (k >= nz) s += ax[k - nz];
    if (k % nz > 0) s += az[k - 1];
    diag[k] = s;
  }
}

/** Solves column i exactly with its neighbours' current values (line Gauss–Seidel). */
function solveColumn(level: Level, i: number): void {
  const { nx, nz, ax, az, pivotInverse, up, b, x } = level;
  const start = i * nz;
  const end = start + nz;
  const hasLeft = i > 0;
  const hasRight = i + 1 < nx;
  let previous = 0;
  let coupling = 0;
  for (let k = start; k < end; k++) {
    let rhs = b[k] + coupling * previous;
    if (hasLeft) rhs += ax[k - nz] * x[k - nz];
    if (hasRight) rhs += ax[k] * x[k + nz];
    previous = flush(rhs * pivotInverse[k]);
    x[k] = previous;
    coupling = az[k];
  }
  for (let k = end - 2; k >= start; k--) x[k] = flush(x[k] + up[k] * x[k + 1]);
}

function sweepForward(level: Level): void {
  for (let i = 0; i < level.nx; i++) solveColumn(level, i);
}

function sweepBackward(level: Level): void {
  for (let i = level.nx - 1; i >= 0; i--) solveColumn(level, i);
}

/** y = A·v on a level (column by column). */
function multiplyLevel(level: Level, v: Float64Array, y: Float64Array): void {
  const { diag, ax, az, nz } = level;
  const n = v.length;
  for (let k = 0; k < n; k++) {
    let s = diag[k] * v[k];
    if (k > 0) s -= az[k - 1] * v[k - 1];
    if (k + 1 < n) s -= az[k] * v[k + 1];
    if (k >= nz) s -= ax[k - nz] * v[k - nz];
    if (k + nz < n) s -= ax[k] * v[k + nz];
    y[k] = s;
  }
}

/**
 * b − A·x after one forward sweep from x = 0: each column's equation held when it was solved,
 * with its right neighbour still at zero, so what is left is that neighbour's coupling times
 * its new value.
 */
function residualAfterSweep(level: Level): void {
  const { x, ax, nz } = level;
  const res = level.residual;
  const last = res.length - nz;
  for (let k = 0; k < last; k++) res[k] = ax[k] * x[k + nz];
  for (let k = last; k < res.length; k++) res[k] = 0;
}

/** coarse.b = Pᵀ·fine.residual (zero at coarse fixed nodes). */
function restrict(fine: Level, coarse: Level): void {
  const { nx: fx, nz, residual: res, left, right, leftWeight, rightWeight } = fine;
  const cb = coarse.b;
  cb.fill(0);
  for (let i = 0; i < fx; i++) {
    addColumn(res, cb, i * nz, left[i] * nz, leftWeight[i], nz);
    if (rightWeight[i] > 0) addColumn(res, cb, i * nz, right[i] * nz, rightWeight[i], nz);
  }
  const { fixed } = coarse;
  for (let k = 0; k < cb.length; k++) if (fixed[k] === 1) cb[k] = 0;
}

/** fine.x += P·coarse.x (fixed fine nodes kept at zero). */
function prolong(fine: Level, coarse: Level): void {
  const { nx: fx, nz, x, fixed, left, right, leftWeight, rightWeight } = fine;
  const xc = coarse.x;
  for (let i = 0; i < fx; i++) {
    const start = i * nz;
    const l = left[i] * nz;
    const r = right[i] * nz;
    const wl = leftWeight[i];
    const wr = rightWeight[i];
    for (let j = 0; j < nz; j++) {
      const k = start + j;
      if (fixed[k] === 0) x[k] += wl * xc[l + j] + wr * xc[r + j];
    }
  }
}

/** Zeroes the fixed rows; returns the squared norm left. */
function freeRows(r: Float64Array, fixed: Uint8Array): number {
  let sum = 0;
  for (let k = 0; k < r.length; k++) {
    const v = fixed[k] === 1 ? 0 : r[k];
    r[k] = v;
    sum += v * v;
  }
  return sum;
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let k = 0; k < a.length; k++) s += a[k] * b[k];
  return s;
}

/** x += α·p; r −= α·q (r flushed to zero below FLUSH). */
function updateSolution(x: Float64Array, r: Float64Array, p: Float64Array, q: Float64Array, alpha: number): void {
  for (let k = 0; k < x.length; k++) {
    x[k] += alpha * p[k];
    r[k] = flush(r[k] - alpha * q[k]);
  }
}

/** p = z + β·p */
function updateDirection(p: Float64Array, z: Float64Array, beta: number): void {
  for (let k = 0; k < p.length; k++) p[k] = flush(z[k] + beta * p[k]);
}
