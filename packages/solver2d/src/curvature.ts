import type { NodeGrid, Point, Polyline } from './junction.ts';

/**
 * Radius of curvature of a junction where it turns under a mask edge.
 *
 * The junction leaves the sealed surface at right angles and ends up level below the window,
 * so its normal turns through 90°. The radius is taken where the normal points at 45° (the
 * middle of the turn), from the implicit-curve formula for the zero set of the indicator φ:
 *   κ = |φxx·φz² − 2·φxz·φx·φz + φzz·φx²| / (φx² + φz²)^(3/2),   R = 1/κ,
 * with the derivatives by three-point differences on the (non-uniform) node grid, bilinear
 * between nodes. The formula gives the same κ for any smooth monotone function of φ, so the
 * log-ratio indicator of junction.ts serves as well as the net doping would.
 */

interface Derivatives {
  fx: number;
  fz: number;
  fxx: number;
  fzz: number;
  fxz: number;
}

/** First and second derivative weights at the middle of three points spaced hm, hp. */
function weights(hm: number, hp: number): [number, number, number, number, number, number] {
  const s = hm * hp * (hm + hp);
  return [-(hp * hp) / s, (hp * hp - hm * hm) / s, (hm * hm) / s, (2 * hp) / s, (-2 * (hm + hp)) / s, (2 * hm) / s];
}

/** Index triple around node k on an axis of n points; a mirror at the first point (the sealed surface, a wall). */
function stencil(axis: Float64Array, k: number): { km: number; kp: number; hm: number; hp: number } {
  const n = axis.length;
  if (k === 0) return { km: 1, kp: 1, hm: axis[1] - axis[0], hp: axis[1] - axis[0] };
  if (k === n - 1) return { km: n - 2, kp: n - 2, hm: axis[n - 1] - axis[n - 2], hp: axis[n - 1] - axis[n - 2] };
  return { km: k - 1, kp: k + 1, hm: axis[k] - axis[k - 1], hp: axis[k + 1] - axis[k] };
}

function nodeDerivatives(grid: NodeGrid, i: number, j: number): Derivatives {
  const { xs, zs, values, nx } = grid;
  const v = (ii: number, jj: number) => values[jj * nx + ii];
  const sx = stencil(xs, i);
  const sz = stencil(zs, j);
  const [ax, bx, cx, axx, bxx, cxx] = weights(sx.hm, sx.hp);
  const [az, bz, cz, azz, bzz, czz] = weights(sz.hm, sz.hp);
  const f0 = v(i, j);
  const fxAt = (jj: number) => ax * v(sx.km, jj) + bx * v(i, jj) + cx * v(sx.kp, jj);
  // A mirror makes the first derivative across it vanish, whatever the weights say.
  const mirrorX = sx.km === sx.kp;
  const mirrorZ = sz.km === sz.kp;
  const fx = mirrorX ? 0 : fxAt(j);
  const fz = mirrorZ ? 0 : az * v(i, sz.km) + bz * f0 + cz * v(i, sz.kp);
  const fxx = axx * v(sx.km, j) + bxx * f0 + cxx * v(sx.kp, j);
  const fzz = azz * v(i, sz.km) + bzz * f0 + czz * v(i, sz.kp);
  const fxz = mirrorX || mirrorZ ? 0 : az * fxAt(sz.km) + bz * fxAt(j) + cz * fxAt(sz.kp);
  return { fx, fz, fxx, fzz, fxz };
}

function cellOf(axis: Float64Array, x: number): number {
  let lo = 0;
  let hi = axis.length - 2;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (axis[mid] <= x) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

/** Derivatives of the indicator at (x, z), bilinear between the four surrounding nodes. */
function derivativesAt(grid: NodeGrid, x: number, z: number): Derivatives {
  const i = cellOf(grid.xs, x);
  const j = cellOf(grid.zs, z);
  const tx = Math.min(1, Math.max(0, (x - grid.xs[i]) / (grid.xs[i + 1] - grid.xs[i])));
  const tz = Math.min(1, Math.max(0, (z - grid.zs[j]) / (grid.zs[j + 1] - grid.zs[j])));
  const d00 = nodeDerivatives(grid, i, j), d10 = nodeDerivatives(grid, i + 1, j);
  const d01 = nodeDerivatives(grid, i, j + 1), d11 = nodeDerivatives(grid, i + 1, j + 1);
  const mix = (key: keyof Derivatives) =>
    (1 - tz) * ((1 - tx) * d00[key] + tx * d10[key]) + tz * ((1 - tx) * d01[key] + tx * d11[key]);
  return { fx: mix('fx'), fz: mix('fz'), fxx: mix('fxx'), fzz: mix('fzz'), fxz: mix('fxz') };
}

function curvatureOf(d: Derivatives): number {
  const g2 = d.fx * d.fx + d.fz * d.fz;
  return Math.abs(d.fxx * d.fz * d.fz - 2 * d.fxz * d.fx * d.fz + d.fzz * d.fx * d.fx) / g2 ** 1.5;
}

interface EdgeCurvature {
  /** radius of curvature at the middle of the turn, µm */
  radiusUm: number;
  /** where that is, µm */
  point: Point;
}

/**
 * Curvature of the junction that meets the surface at `surfaceX`, at the first point from
 * there along `line` where the normal is at 45° (|φx| = |φz|); null if it never gets there
 * (a junction that reaches the bottom or a wall before it turns).
 */
export function edgeCurvature(grid: NodeGrid, line: Polyline, surfaceX: number): EdgeCurvature | null {
  const forward = Math.abs(line[0][0] - surfaceX) <= Math.abs(line[line.length - 1][0] - surfaceX) && line[0][1] === 0;
  const points = forward ? line : [...line].reverse();
  const tilt = (p: Point) => {
    const d = derivativesAt(grid, p[0], p[1]);
    return Math.abs(d.fx) - Math.abs(d.fz);
  };
  let prev = points[0];
  let prevTilt = tilt(prev);
  for (let k = 1; k < points.length; k++) {
    const p = points[k];
    const t = tilt(p);
    if (prevTilt > 0 && t <= 0) {
      const s = prevTilt / (prevTilt - t);
      const at: Point = [prev[0] + s * (p[0] - prev[0]), prev[1] + s * (p[1] - prev[1])];
      return { radiusUm: 1 / curvatureOf(derivativesAt(grid, at[0], at[1])), point: at };
    }
    prev = p;
    prevTilt = t;
  }
  return null;
}
