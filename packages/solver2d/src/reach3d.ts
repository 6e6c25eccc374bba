import type { NodeGrid } from './junction.ts';
import type { Mesh3d } from './mesh3d.ts';

/**
 * Junction measures of a 3D field: the surface plane as a node grid (the walls added, as
 * in junction.ts: zero flux through a wall means the wall value equals the first cell's), the
 * reach of the junction along a ray in the surface plane and its depth under a point.
 * `indicator` is log10 N_D − log10 N_A at every node (junction.ts), zero on the junction;
 * between nodes it is interpolated bilinearly in the plane and linearly in depth.
 */

/** The padded coordinates of a cell-centred axis: the walls, then the centres between them. */
function padded(centres: Float64Array, length: number): Float64Array {
  const out = new Float64Array(centres.length + 2);
  out[0] = 0;
  out.set(centres, 1);
  out[out.length - 1] = length;
  return out;
}

/** Plane k of the indicator as a NodeGrid over (x, y) with the walls added (xs = x, zs = y). */
export function planeGrid(mesh: Mesh3d, indicator: Float64Array, k: number): NodeGrid {
  const { nx, ny } = mesh;
  const px = nx + 2;
  const py = ny + 2;
  const values = new Float64Array(px * py);
  const base = k * nx * ny;
  for (let jp = 0; jp < py; jp++) {
    const j = Math.min(ny - 1, Math.max(0, jp - 1));
    for (let ip = 0; ip < px; ip++) {
      const i = Math.min(nx - 1, Math.max(0, ip - 1));
      values[jp * px + ip] = indicator[base + j * nx + i];
    }
  }
  return { xs: padded(mesh.x, mesh.widthUm), zs: padded(mesh.y, mesh.lengthUm), values, nx: px, nz: py };
}

/** Index of the interval of `axis` holding v (clamped to the ends). */
function interval(axis: Float64Array, v: number): number {
  let lo = 0;
  let hi = axis.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (axis[mid] <= v) lo = mid;
    else hi = mid;
  }
  return lo;
}

/** Bilinear value of a node grid at (x, y), clamped to the grid. */
export function gridValueAt(grid: NodeGrid, x: number, y: number): number {
  const { xs, zs, values, nx } = grid;
  const i = interval(xs, x);
  const j = interval(zs, y);
  const s = Math.min(1, Math.max(0, (x - xs[i]) / (xs[i + 1] - xs[i])));
  const t = Math.min(1, Math.max(0, (y - zs[j]) / (zs[j + 1] - zs[j])));
  const n = j * nx + i;
  return (1 - t) * ((1 - s) * values[n] + s * values[n + 1]) + t * ((1 - s) * values[n + nx] + s * values[n + nx + 1]);
}

/**
 * Distance along the ray from (x0, y0) in the unit direction (ux, uy) to the first place the
 * bilinear surface value changes sign, µm; null if it does not before `limit`. The ray is
 * sampled at `step` and the crossing refined by bisection of the interpolant.
 */
export function reachAlong(grid: NodeGrid, x0: number, y0: number, ux: number, uy: number, limit: number, step: number): number | null {
  const at = (s: number) => gridValueAt(grid, x0 + s * ux, y0 + s * uy);
  const inside = at(0) > 0;
  let prev = 0;
  for (let s = step; prev < limit; s += step) {
    const here = Math.min(s, limit);
    if ((at(here) > 0) !== inside) {
      let a = prev;
      let b = here;
      for (let n = 0; n < 60 && b - a > 1e-12; n++) {
        const m = 0.5 * (a + b);
        if ((at(m) > 0) === inside) a = m;
        else b = m;
      }
      return 0.5 * (a + b);
    }
    prev = here;
  }
  return null;
}

/** The indicator's column under (x, y), bilinear in each plane, into `out` (nz values). */
export function columnUnder(mesh: Mesh3d, indicator: Float64Array, x: number, y: number, out: Float64Array): Float64Array {
  const { nx, ny, nz } = mesh;
  const xs = padded(mesh.x, mesh.widthUm);
  const ys = padded(mesh.y, mesh.lengthUm);
  const ip = interval(xs, x);
  const jp = interval(ys, y);
  const s = Math.min(1, Math.max(0, (x - xs[ip]) / (xs[ip + 1] - xs[ip])));
  const t = Math.min(1, Math.max(0, (y - ys[jp]) / (ys[jp + 1] - ys[jp])));
  const i0 = Math.min(nx - 1, Math.max(0, ip - 1)), i1 = Math.min(nx - 1, ip);
  const j0 = Math.min(ny - 1, Math.max(0, jp - 1)), j1 = Math.min(ny - 1, jp);
  for (let k = 0; k < nz; k++) {
    const b = k * nx * ny;
    out[k] = (1 - t) * ((1 - s) * indicator[b + j0 * nx + i0] + s * indicator[b + j0 * nx + i1]) +
      t * ((1 - s) * indicator[b + j1 * nx + i0] + s * indicator[b + j1 * nx + i1]);
  }
  return out;
}

/** Depth of the first junction under (x, y), µm (linear between nodes), or null. */
export function junctionDepthUnder(mesh: Mesh3d, indicator: Float64Array, x: number, y: number): number | null {
  const column = columnUnder(mesh, indicator, x, y, new Float64Array(mesh.nz));
  for (let k = 0; k + 1 < mesh.nz; k++) {
    const a = column[k];
    const b = column[k + 1];
    if ((a > 0) !== (b > 0)) return mesh.z[k] + (mesh.z[k + 1] - mesh.z[k]) * (a / (a - b));
  }
  return null;
}
