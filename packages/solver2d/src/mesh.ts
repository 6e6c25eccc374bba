/**
 * Non-uniform tensor mesh of the cross-section.
 *
 * x (lateral) is cell-centred: faces lie on the side walls and on every mask edge, so each
 * surface cell is wholly open or wholly masked and the walls are zero-flux faces.
 * z (depth) is vertex-centred: node 0 lies on the surface, so a predeposition holds the
 * surface node itself at Cs and the junction at the surface is read off node values.
 */
import { keepLayout } from './layouts.ts';

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

/**
 * Samples per interval for the spacing integral: 16 per finest cell the interval could hold,
 * between 64 and 2048. The integrand 1/s(x) is continuous and piecewise smooth, so the
 * trapezoid rule places nodes to far below a cell either way.
 */
const MIN_SAMPLES = 64;
const MAX_SAMPLES = 2048;
const SAMPLES_PER_CELL = 16;

/**
 * A SpacingRule with every field a number (no near spacing: `nearUm` Infinity), made one way:
 * the rules a plan makes differ in shape (with or without the near spacing, literal or
 * spread) and the features and fixed points in their element kinds (a window edge at 5 µm
 * or at 5.5 µm), and each new shape reaching these loops once they are compiled undid the
 * compiled code (seen as 4–5 recompilations of each per worker thread in a width sweep).
 */
class Spacing {
  readonly fineUm: number;
  readonly fineReachUm: number;
  readonly grade: number;
  readonly maxUm: number;
  readonly nearUm: number;
  readonly nearReachUm: number;

  constructor(rule: SpacingRule) {
    this.fineUm = rule.fineUm;
    this.fineReachUm = rule.fineReachUm;
    this.grade = rule.grade;
    this.maxUm = rule.maxUm;
    this.nearUm = rule.nearUm ?? Infinity;
    this.nearReachUm = rule.nearReachUm ?? 0;
  }
}

function samplesFor(a: number, b: number, rule: Spacing): number {
  const finest = Math.min(rule.fineUm, rule.maxUm, rule.nearUm);
  const wanted = Math.ceil((SAMPLES_PER_CELL * (b - a)) / finest);
  return Math.min(MAX_SAMPLES, Math.max(MIN_SAMPLES, Number.isFinite(wanted) ? wanted : MAX_SAMPLES));
}

function spacingAt(distance: number, rule: Spacing): number {
  const beyond = Math.max(0, distance - rule.fineReachUm);
  const s = Math.min(rule.maxUm, rule.fineUm + rule.grade * beyond);
  return Math.min(s, rule.nearUm + rule.grade * Math.max(0, distance - rule.nearReachUm));
}

/**
 * ∫dx/s(x) over [a, b] by the trapezoid rule on `samples` parts; when `cumulative` is given
 * (samples + 1 long) it receives the running integral. `features` are sorted; the distance
 * to the nearest one is kept with a cursor, since the samples only move right.
 */
function spacingIntegral(a: number, b: number, features: Float64Array, rule: Spacing, samples: number, cumulative: Float64Array | null): number {
  const h = (b - a) / samples;
  let p = 0;
  const inverseSpacing = (x: number) => {
    while (p < features.length && features[p] <= x) p++;
    const left = p > 0 ? x - features[p - 1] : Infinity;
    const right = p < features.length ? features[p] - x : Infinity;
    return 1 / spacingAt(Math.min(left, right), rule);
  };
  let total = 0;
  let previous = inverseSpacing(a);
  for (let k = 1; k <= samples; k++) {
    const next = inverseSpacing(a + k * h);
    total += 0.5 * h * (previous + next);
    if (cumulative) cumulative[k] = total;
    previous = next;
  }
  return total;
}

function cellsFor(total: number): number {
  return Math.max(1, Math.ceil(total - 1e-9));
}

/**
 * Places nodes on [a, b] so that the spacing follows 1/∫ds/s(x): n cells where n is the
 * integral rounded up, node k where the cumulative integral reaches k·(total/n).
 */
function gradedInterval(a: number, b: number, features: Float64Array, rule: Spacing, out: number[]): void {
  const samples = samplesFor(a, b, rule);
  const h = (b - a) / samples;
  const cumulative = new Float64Array(samples + 1);
  const total = spacingIntegral(a, b, features, rule, samples, cumulative);
  const cells = cellsFor(total);
  let k = 0;
  for (let m = 1; m < cells; m++) {
    const target = (m * total) / cells;
    while (cumulative[k + 1] < target) k++;
    const f = (target - cumulative[k]) / (cumulative[k + 1] - cumulative[k]);
    out.push(a + (k + f) * h);
  }
  out.push(b);
}

function axisStops(length: number, fixed: readonly number[]): Float64Array {
  return Float64Array.from(new Set([0, length, ...fixed])).sort();
}

function sorted(features: readonly number[]): Float64Array {
  return Float64Array.from(features).sort();
}

/**
 * How many cells `gradedAxis` would make, without placing them: a request for an absurd
 * mesh (a diffusion length of picometres across a wafer's width) is refused by its count,
 * before any large array exists.
 */
export function gradedAxisCells(length: number, fixed: readonly number[], features: readonly number[], rule: SpacingRule): number {
  const stops = axisStops(length, fixed);
  const near = sorted(features);
  const spacing = keepLayout(new Spacing(rule));
  let cells = 0;
  for (let s = 0; s + 1 < stops.length; s++) {
    cells += cellsFor(spacingIntegral(stops[s], stops[s + 1], near, spacing, samplesFor(stops[s], stops[s + 1], spacing), null));
  }
  return cells;
}

/** Faces on [0, width] with a face on every fixed point and fine spacing near `features`. */
export function gradedAxis(length: number, fixed: readonly number[], features: readonly number[], rule: SpacingRule): Float64Array {
  const stops = axisStops(length, fixed);
  const near = sorted(features);
  const spacing = keepLayout(new Spacing(rule));
  const out: number[] = [0];
  for (let s = 0; s + 1 < stops.length; s++) gradedInterval(stops[s], stops[s + 1], near, spacing, out);
  return Float64Array.from(out);
}

/** The narrowest cell width, µm. */
export function finestX(mesh: Mesh): number {
  let least = Infinity;
  for (let i = 0; i < mesh.nx; i++) least = Math.min(least, mesh.dx[i]);
  return least;
}

/** The smallest spacing of successive depth nodes, µm. */
export function finestZ(mesh: Mesh): number {
  let least = Infinity;
  for (let j = 1; j < mesh.nz; j++) least = Math.min(least, mesh.z[j] - mesh.z[j - 1]);
  return least;
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
