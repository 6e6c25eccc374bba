import { PRIMING_CALLS, primeOnce } from './priming.ts';
import type { Mesh } from './mesh.ts';

/**
 * Junction finding on the node grid.
 *
 * The junction is where donors and acceptors balance. Concentrations span many decades, so
 * the indicator interpolated between nodes is f = log10 N_D − log10 N_A, which is close to
 * linear in position near a diffused junction (the log of an erfc or Gaussian tail is
 * smooth), where N_D − N_A itself is not.
 */

/** Floor under each total before the log, cm^-3: far below any doping of interest. */
const LOG_FLOOR = 1;

export function junctionIndicator(donors: Float64Array, acceptors: Float64Array, out: Float64Array): Float64Array {
  for (let k = 0; k < out.length; k++) {
    out[k] = Math.log10(Math.max(donors[k], LOG_FLOOR)) - Math.log10(Math.max(acceptors[k], LOG_FLOOR));
  }
  return out;
}

/**
 * The node grid of a mesh with the side walls added as columns: x is cell-centred, and zero
 * flux through a wall means the wall value equals the first cell's, so contours and surface
 * crossings reach the walls instead of stopping half a cell short.
 */
export interface NodeGrid {
  xs: Float64Array;
  zs: Float64Array;
  values: Float64Array;
  nx: number;
  nz: number;
}

export function wallPaddedGrid(mesh: Mesh, field: Float64Array): NodeGrid {
  const nx = mesh.nx + 2;
  const nz = mesh.nz;
  const xs = new Float64Array(nx);
  xs[0] = 0;
  xs.set(mesh.x, 1);
  xs[nx - 1] = mesh.widthUm;
  const values = new Float64Array(nx * nz);
  for (let j = 0; j < nz; j++) {
    const src = j * mesh.nx;
    const dst = j * nx;
    values[dst] = field[src];
    values.set(field.subarray(src, src + mesh.nx), dst + 1);
    values[dst + nx - 1] = field[src + mesh.nx - 1];
  }
  return { xs, zs: mesh.z, values, nx, nz };
}

export type Point = [number, number];
export type Polyline = Point[];

/** Position of the zero of a linear function that is a at p and b at q. */
function zeroBetween(p: number, q: number, a: number, b: number): number {
  return p + (q - p) * (a / (a - b));
}

/**
 * Zero contour of `values` by marching squares on the rectilinear grid, joined into
 * polylines (open where they meet the domain boundary, closed otherwise), in µm.
 * Saddle cells are resolved by the mean of the four corners.
 */
export function zeroContours(grid: NodeGrid): Polyline[] {
  primeOnce(primeScan);
  const { xs, zs, values, nx, nz } = grid;
  // Edge ids: horizontal edge from node (i, j) to (i+1, j) is 2·(j·nx+i); vertical to (i, j+1) is +1.
  const point = new Map<number, Point>();
  const edgePoint = (id: number): Point => {
    let p = point.get(id);
    if (p) return p;
    const node = id >> 1;
    const i = node % nx;
    const j = (node - i) / nx;
    const a = values[node];
    if ((id & 1) === 0) p = [zeroBetween(xs[i], xs[i + 1], a, values[node + 1]), zs[j]];
    else p = [xs[i], zeroBetween(zs[j], zs[j + 1], a, values[node + nx])];
    point.set(id, p);
    return p;
  };
  const links = new Map<number, number[]>();
  const link = (e1: number, e2: number) => {
    for (const [a, b] of [[e1, e2], [e2, e1]] as const) {
      const list = links.get(a);
      if (list) list.push(b);
      else links.set(a, [b]);
    }
  };
  const cells = crossingCells(values, nx, nz);
  for (let c = 0; c < cells.length; c++) {
    const code = cells[c] % 16;
    const n0 = (cells[c] - code) / 16;
    const v00 = values[n0], v10 = values[n0 + 1], v01 = values[n0 + nx], v11 = values[n0 + nx + 1];
    const top = 2 * n0;
    const bottom = 2 * (n0 + nx);
    const left = 2 * n0 + 1;
    const right = 2 * (n0 + 1) + 1;
    switch (code) {
      case 1: case 14: link(top, left); break;
      case 2: case 13: link(top, right); break;
      case 3: case 12: link(left, right); break;
      case 4: case 11: link(right, bottom); break;
      case 6: case 9: link(top, bottom); break;
      case 7: case 8: link(left, bottom); break;
      case 5: case 10: {
        const centreAbove = v00 + v10 + v01 + v11 > 0;
        // code 5: corners 00 and 11 above. If the centre is above too, they connect.
        if ((code === 5) === centreAbove) { link(top, right); link(left, bottom); }
        else { link(top, left); link(right, bottom); }
        break;
      }
    }
  }
  const used = new Set<number>();
  const walk = (start: number): Polyline => {
    const line: Polyline = [edgePoint(start)];
    used.add(start);
    let current = start;
    for (;;) {
      const next = (links.get(current) ?? []).find((e) => !used.has(e));
      if (next === undefined) break;
      used.add(next);
      line.push(edgePoint(next));
      current = next;
    }
    return line;
  };
  const lines: Polyline[] = [];
  for (const [edge, ends] of links) if (ends.length === 1 && !used.has(edge)) lines.push(walk(edge));
  for (const edge of links.keys()) {
    if (used.has(edge)) continue;
    const loop = walk(edge);
    loop.push(loop[0]);
    lines.push(loop);
  }
  return lines;
}

/** crossingCells' output, kept between calls (see there). */
let cellBuffer = new Float64Array(1 << 14);

/**
 * Runs crossingCells PRIMING_CALLS times on a 3 × 3 grid, once per thread, so that the code
 * after its loop has type feedback before the loop is compiled mid-call (see priming.ts;
 * without it the compiled scan was thrown away at its return, twice a sweep worker).
 */
function primeScan(): void {
  const values = Float64Array.of(1, 1, -1, 1, -1, -1, -1, -1, -1);
  for (let r = 0; r < PRIMING_CALLS; r++) crossingCells(values, 3, 3);
}

/**
 * The cells the zero contour crosses, in row order, each as 16·(index of its top-left node)
 * + its marching-squares code (bit 1 top-left above zero, 2 top-right, 4 bottom-right,
 * 8 bottom-left). The scan over every cell is a function of its own: inside zeroContours,
 * with the linking closures inlined into it, it took a recompilation of the whole at most
 * calls of a sweep's worker thread. Kept in doubles, exact for any mesh the limits allow.
 * The result is a view of a buffer kept between calls (valid until the next call), large
 * enough for most contours and grown, rarely, for larger ones: starting from 64 cells on
 * every call, the compiled scan met its growth path anew and was thrown away up to 9 times a
 * sweep worker.
 */
function crossingCells(values: Float64Array, nx: number, nz: number): Float64Array {
  let count = 0;
  let out = cellBuffer;
  for (let j = 0; j + 1 < nz; j++) {
    for (let i = 0; i + 1 < nx; i++) {
      const n0 = j * nx + i;
      const code = (values[n0] > 0 ? 1 : 0) | (values[n0 + 1] > 0 ? 2 : 0) | (values[n0 + nx + 1] > 0 ? 4 : 0) | (values[n0 + nx] > 0 ? 8 : 0);
      if (code === 0 || code === 15) continue;
      if (count === out.length) {
        const grown = new Float64Array(2 * count);
        grown.set(out);
        out = grown;
        cellBuffer = grown;
      }
      out[count++] = 16 * n0 + code;
    }
  }
  return out.subarray(0, count);
}

/** Values of the grid along the column at x (linear between the neighbouring node columns). */
export function columnAt(grid: NodeGrid, x: number, out: Float64Array): Float64Array {
  const { xs, values, nx, nz } = grid;
  let i = 0;
  while (i + 2 < nx && xs[i + 1] < x) i++;
  const t = Math.min(1, Math.max(0, (x - xs[i]) / (xs[i + 1] - xs[i])));
  for (let j = 0; j < nz; j++) out[j] = (1 - t) * values[j * nx + i] + t * values[j * nx + i + 1];
  return out;
}

/** Every depth where a column profile changes sign, from the surface down, µm. */
export function crossings(profile: Float64Array, coordinates: Float64Array): number[] {
  const out: number[] = [];
  for (let k = 0; k + 1 < profile.length; k++) {
    const a = profile[k];
    const b = profile[k + 1];
    if ((a > 0) !== (b > 0)) out.push(zeroBetween(coordinates[k], coordinates[k + 1], a, b));
  }
  return out;
}

/** Value of row `row` of the grid at x (linear between the neighbouring node columns). */
export function rowValueAt(grid: NodeGrid, row: number, x: number): number {
  const { xs, values, nx } = grid;
  let i = 0;
  while (i + 2 < nx && xs[i + 1] < x) i++;
  const t = Math.min(1, Math.max(0, (x - xs[i]) / (xs[i + 1] - xs[i])));
  const base = row * nx;
  return (1 - t) * values[base + i] + t * values[base + i + 1];
}

/** Value of the surface row at x. */
export function surfaceValueAt(grid: NodeGrid, x: number): number {
  return rowValueAt(grid, 0, x);
}

/**
 * Where row `row` first changes sign going from `from` towards `direction` (−1 left, +1
 * right), µm; null if it never does before the wall.
 */
export function rowCrossing(grid: NodeGrid, row: number, from: number, direction: -1 | 1): number | null {
  const { xs, values, nx } = grid;
  const base = row * nx;
  const start = rowValueAt(grid, row, from);
  const inside = start > 0;
  let prevX = from;
  let prevV = start;
  if (direction < 0) {
    for (let i = nx - 1; i >= 0; i--) {
      if (xs[i] >= from) continue;
      const v = values[base + i];
      if ((v > 0) !== inside) return zeroBetween(prevX, xs[i], prevV, v);
      prevX = xs[i];
      prevV = v;
    }
  } else {
    for (let i = 0; i < nx; i++) {
      if (xs[i] <= from) continue;
      const v = values[base + i];
      if ((v > 0) !== inside) return zeroBetween(prevX, xs[i], prevV, v);
      prevX = xs[i];
      prevV = v;
    }
  }
  return null;
}

/**
 * Where the surface row first changes sign going from `from` towards `direction` (−1 left,
 * +1 right), µm; null if it never does before the wall.
 */
export function surfaceCrossing(grid: NodeGrid, from: number, direction: -1 | 1): number | null {
  return rowCrossing(grid, 0, from, direction);
}

/** The largest sideways extent of a junction beyond a mask edge and the depth where it lies, µm. */
export interface LateralReach {
  reachUm: number;
  depthUm: number;
}

/**
 * Lateral reach of the junction that bounds a region below a window centre: on every node row
 * of the region at the centre, from `topUm` (0 for a region at the surface, the upper
 * junction of a buried one) down to the junction below it (`bottomUm`; null: the bottom of
 * the grid), the first sign change going from `centre` towards `direction` is the junction's
 * extent at that depth; the reach is the largest extent beyond `edge` (x0 going left, x1
 * going right). A profile that falls monotonically with depth (any surface source) has its
 * widest row at the surface, so there the reach is the surface lateral encroachment itself,
 * at depth 0; a buried peak (an implant) bulges further below it.
 *
 * Between rows the extent e(z) is smooth with a maximum: the parabola through the widest row
 * and its two neighbours gives the reach and its depth to second order in the row spacing,
 * where the widest row alone would be short by about e''·h²/8 and off in depth by up to h/2.
 *
 * Null when some row meets no sign change before `limit` (a neighbouring window's near edge,
 * or the wall): there the region has merged with another and has no reach of its own.
 */
export function lateralReach(grid: NodeGrid, centre: number, edge: number, direction: -1 | 1,
                             topUm: number, bottomUm: number | null, limit: number): LateralReach | null {
  const { zs, nz } = grid;
  let best = -1;
  let bestExtent = -Infinity;
  // Extents of the rows either side of the widest, for the parabola.
  let before = NaN;
  let after = NaN;
  let previous = NaN;
  let last = -1;
  for (let j = 0; j < nz; j++) {
    if (topUm > 0 ? zs[j] <= topUm : zs[j] < 0) continue;
    if (bottomUm !== null && zs[j] >= bottomUm) break;
    const x = rowCrossing(grid, j, centre, direction);
    if (x === null || (direction < 0 ? x <= limit : x >= limit)) return null;
    const extent = direction < 0 ? edge - x : x - edge;
    if (extent > bestExtent) {
      best = j;
      bestExtent = extent;
      before = previous;
      after = NaN;
    } else if (j === best + 1) {
      after = extent;
    }
    previous = extent;
    last = j;
  }
  if (best < 0) return null;
  if (best === 0 || best === last || !Number.isFinite(before) || !Number.isFinite(after)) {
    return { reachUm: bestExtent, depthUm: zs[best] };
  }
  return parabolaTop(zs[best - 1], zs[best], zs[best + 1], before, bestExtent, after);
}

/**
 * Vertex of the parabola through (z0, e0), (z1, e1), (z2, e2) with e1 the largest: its
 * slope is (e1 − e0)/(z1 − z0) at the middle of the first interval and changes at the rate
 * 2a = 2·(s2 − s1)/(z2 − z0).
 */
function parabolaTop(z0: number, z1: number, z2: number, e0: number, e1: number, e2: number): LateralReach {
  const d1 = z1 - z0;
  const d2 = z2 - z1;
  const s1 = (e1 - e0) / d1;
  const s2 = (e2 - e1) / d2;
  const a = (s2 - s1) / (d1 + d2);
  if (!(a < 0)) return { reachUm: e1, depthUm: z1 };
  const slopeAtZ1 = s1 + a * d1;
  const dz = Math.min(d2, Math.max(-d1, -slopeAtZ1 / (2 * a)));
  return { reachUm: e1 + slopeAtZ1 * dz + a * dz * dz, depthUm: z1 + dz };
}

/**
 * Every place the surface row changes sign going outward from `from` towards `direction`,
 * nearest first, µm: the k-th is where the k-th junction below a window meets the surface
 * for nested junctions (an emitter inside a base inside a well).
 */
export function surfaceCrossings(grid: NodeGrid, from: number, direction: -1 | 1): number[] {
  const { xs, values, nx } = grid;
  const out: number[] = [];
  let prevX = from;
  let prevV = surfaceValueAt(grid, from);
  for (let n = 0; n < nx; n++) {
    const i = direction < 0 ? nx - 1 - n : n;
    if (direction < 0 ? xs[i] >= from : xs[i] <= from) continue;
    const v = values[i];
    if ((v > 0) !== (prevV > 0)) out.push(zeroBetween(prevX, xs[i], prevV, v));
    prevX = xs[i];
    prevV = v;
  }
  return out;
}
