/**
 * Non-uniform tensor mesh of the cross-section.
 *
 * x (lateral) is cell-centred: faces lie on the side walls and on every mask edge, so each
 * surface cell is wholly open or wholly masked and the walls are zero-flux faces.
 * z (depth) is vertex-centred: node 0 lies on the surface, so a predeposition holds the
 * surface node itself at Cs and the junction at the surface is read off node values.
 */
export interface Mesh {
  widthUm: number;
  depthUm: number;
  /** x faces, nx + 1 of them, from 0 to widthUm. */
  xFaces: Float64Array;
  /** x cell centres (the nodes), nx. */
  x: Float64Array;
  /** x cell widths, nx. */
  dx: Float64Array;
  /** z nodes, nz, from 0 to depthUm. */
  z: Float64Array;
  /** z control-volume thickness per node (half cells at surface and bottom), nz. */
  dzVolume: Float64Array;
  nx: number;
  nz: number;
}

/** Local target spacing along one axis: fine near features, growing away from them. */
export interface SpacingRule {
  /** spacing within `fineReachUm` of a feature, µm */
  fineUm: number;
  /** distance from a feature over which the spacing stays fine, µm */
  fineReachUm: number;
  /** spacing increase per unit distance beyond the fine reach (growth ratio − 1) */
  grade: number;
  /** largest spacing anywhere, µm */
  maxUm: number;
  /** optional finer spacing right at a feature, growing by `grade` until it meets `fineUm`:
   *  resolves a short early step (a brief predeposition) inside a long recipe */
  nearUm?: number;
  /** distance from a feature over which `nearUm` holds before it grows, µm */
  nearReachUm?: number;
}

/** Samples per interval for the spacing integral; the placement error is far below a cell. */
const SAMPLES = 2048;

function spacingAt(distance: number, rule: SpacingRule): number {
  const beyond = Math.max(0, distance - rule.fineReachUm);
  const s = Math.min(rule.maxUm, rule.fineUm + rule.grade * beyond);
  if (rule.nearUm === undefined) return s;
  return Math.min(s, rule.nearUm + rule.grade * Math.max(0, distance - (rule.nearReachUm ?? 0)));
}

/**
 * Places nodes on [a, b] so that the spacing follows 1/∫ds/s(x): n cells where n is the
 * integral rounded up, node k where the cumulative integral reaches k·(total/n).
 * `distance(x)` is the distance from x to the nearest feature.
 */
/** Cumulative ∫dx/s(x) over [a, b] at SAMPLES + 1 points (trapezoid rule). */
function spacingIntegral(a: number, b: number, distance: (x: number) => number, rule: SpacingRule): Float64Array {
  const h = (b - a) / SAMPLES;
  const cumulative = new Float64Array(SAMPLES + 1);
  let previous = 1 / spacingAt(distance(a), rule);
  for (let k = 1; k <= SAMPLES; k++) {
    const next = 1 / spacingAt(distance(a + k * h), rule);
    cumulative[k] = cumulative[k - 1] + 0.5 * h * (previous + next);
    previous = next;
  }
  return cumulative;
}

function cellsFor(total: number): number {
  return Math.max(1, Math.ceil(total - 1e-9));
}

function gradedInterval(a: number, b: number, distance: (x: number) => number, rule: SpacingRule): number[] {
  const h = (b - a) / SAMPLES;
  const cumulative = spacingIntegral(a, b, distance, rule);
  const total = cumulative[SAMPLES];
  const cells = cellsFor(total);
  const points = [a];
  let k = 0;
  for (let m = 1; m < cells; m++) {
    const target = (m * total) / cells;
    while (cumulative[k + 1] < target) k++;
    const f = (target - cumulative[k]) / (cumulative[k + 1] - cumulative[k]);
    points.push(a + (k + f) * h);
  }
  points.push(b);
  return points;
}

function axisStops(length: number, fixed: readonly number[]): number[] {
  return [...new Set([0, length, ...fixed])].sort((p, q) => p - q);
}

function distanceTo(features: readonly number[]): (x: number) => number {
  if (features.length === 0) return () => Infinity;
  return (x: number) => {
    let d = Infinity;
    for (const f of features) d = Math.min(d, Math.abs(x - f));
    return d;
  };
}

/**
 * How many cells `gradedAxis` would make, without placing them: a request for an absurd
 * mesh (a diffusion length of picometres across a wafer's width) is refused by its count,
 * before any large array exists.
 */
export function gradedAxisCells(length: number, fixed: readonly number[], features: readonly number[], rule: SpacingRule): number {
  const stops = axisStops(length, fixed);
  const distance = distanceTo(features);
  let cells = 0;
  for (let s = 0; s + 1 < stops.length; s++) cells += cellsFor(spacingIntegral(stops[s], stops[s + 1], distance, rule)[SAMPLES]);
  return cells;
}

/** Faces on [0, width] with a face on every fixed point and fine spacing near `features`. */
export function gradedAxis(length: number, fixed: readonly number[], features: readonly number[], rule: SpacingRule): Float64Array {
  const stops = axisStops(length, fixed);
  const distance = distanceTo(features);
  const out: number[] = [0];
  for (let s = 0; s + 1 < stops.length; s++) {
    const interval = gradedInterval(stops[s], stops[s + 1], distance, rule);
    for (let k = 1; k < interval.length; k++) out.push(interval[k]);
  }
  return Float64Array.from(out);
}

export function buildMesh(xFaces: Float64Array, z: Float64Array): Mesh {
  const nx = xFaces.length - 1;
  const nz = z.length;
  if (nx < 2 || nz < 3) throw new Error(`mesh too small: ${nx} columns, ${nz} rows`);
  const x = new Float64Array(nx);
  const dx = new Float64Array(nx);
  for (let i = 0; i < nx; i++) {
    x[i] = 0.5 * (xFaces[i] + xFaces[i + 1]);
    dx[i] = xFaces[i + 1] - xFaces[i];
  }
  const dzVolume = new Float64Array(nz);
  for (let j = 0; j < nz; j++) {
    const up = j > 0 ? z[j] - z[j - 1] : 0;
    const down = j < nz - 1 ? z[j + 1] - z[j] : 0;
    dzVolume[j] = 0.5 * (up + down);
  }
  return { widthUm: xFaces[nx], depthUm: z[nz - 1], xFaces, x, dx, z, dzVolume, nx, nz };
}

/** Uniform faces or nodes on [0, length]; used by tests and the coarse error-estimate solve. */
export function uniformAxis(length: number, cells: number): Float64Array {
  const out = new Float64Array(cells + 1);
  for (let k = 0; k <= cells; k++) out[k] = (length * k) / cells;
  return out;
}
