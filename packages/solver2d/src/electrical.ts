import { FieldLines, searchBreakdown } from './breakdown.ts';
import { depletionDepthUm, depletionReachUm, recovery } from './depletion.ts';
import { electricField, PoissonSolver, poissonMesh, SILICON_PERMITTIVITY_F_PER_CM, ELEMENTARY_CHARGE_C, type JunctionProblem, type PoissonMesh } from './electrostatics.ts';
import { VAN_OVERSTRAETEN_DE_MAN, type IonisationModel } from './ionisation.ts';
import type { Mesh } from './mesh.ts';
import { areaCapacitanceFPerCm2, planeProblem } from './plane-junction.ts';
import { labelRegions } from './region.ts';

/**
 * The electrical rules of a diffused region at room temperature: each window's region held at
 * a reverse bias against the region that contains it (the substrate, or a well), on the final
 * doping of the diffusion. Per bias: the depletion edges below the centre and sideways past
 * the mask edge, the peak field and where it is, the area capacitance below the centre (the
 * plane junction of the centre's column) and the perimeter capacitance per length of mask
 * edge, by charge partition: the region's whole small-signal capacitance per length of stripe
 * less the area part times the drawn width, shared between the window's edges. Then the
 * breakdown voltage of the region and of the plane junction below its centre.
 */

export interface ElectricalOptions {
  biasV: readonly number[];
  model?: IonisationModel;
  /** smallest node spacing kept from the diffusion mesh, µm (default 2.5× its finest) */
  minSpacingUm?: number;
  /** leave out the breakdown searches (their fields stay null) */
  skipBreakdown?: boolean;
  /** keep each window's Poisson problem in the result (for a benchmark) */
  keepProblems?: boolean;
  /** keep the potential, field and depletion of every window and bias (for the files a run writes) */
  keepFields?: boolean;
}

/**
 * The solved cross-sections, each `[windows, biases, nz, nx]` row-major on the electrostatic
 * grid (`x`, `z`, nodes, µm); NaN where a window has no junction or a bias did not converge.
 */
export interface ElectricalFields {
  x: Float64Array;
  z: Float64Array;
  shape: [number, number, number, number];
  /** electrostatic potential ψ, V (0 at the intrinsic level of the grounded side's Fermi level) */
  potentialV: Float64Array;
  /** |E|, V/cm */
  fieldVPerCm: Float64Array;
  /** majority carriers over |net doping| − ½, clipped to [−½, 9.5]: the depletion edge is its zero contour (depletion.ts) */
  depletion: Float64Array;
}

export interface WindowElectrical {
  /** which region the window's region is biased against */
  biasAgainst: 'substrate' | 'well';
  breakdownV: number | null;
  breakdownPlaneV: number | null;
  breakdownLimitedBy: 'edge' | 'plane' | null;
  /** per bias */
  peakFieldVPerCm: (number | null)[];
  peakFieldAtUm: ([number, number] | null)[];
  depletionDepthUm: (number | null)[];
  depletionLateralUm: (number | null)[];
  areaCapacitanceFPerCm2: (number | null)[];
  perimeterCapacitanceFPerCm: (number | null)[];
}

export interface ElectricalResult {
  windows: (WindowElectrical | null)[];
  warnings: string[];
  /** each window's problem, with `keepProblems` */
  problems?: (JunctionProblem | null)[];
  /** with `keepFields` */
  fields?: ElectricalFields;
  /** the electrostatic mesh, nodes */
  columns: number;
  rows: number;
}

/** Nodes of `axis` kept so that neighbours are at least `minUm` apart (the last node always kept). */
export function thinnedAxis(axis: Float64Array, minUm: number): Int32Array {
  const kept: number[] = [0];
  for (let i = 1; i < axis.length - 1; i++) if (axis[i] - axis[kept[kept.length - 1]] >= minUm * (1 - 1e-9)) kept.push(i);
  if (axis.length > 1) {
    if (axis[axis.length - 1] - axis[kept[kept.length - 1]] < 0.5 * minUm && kept.length > 1) kept.pop();
    kept.push(axis.length - 1);
  }
  return Int32Array.from(kept);
}

/** Depletion width of a one-sided abrupt junction on doping N at V, µm (Sze & Ng (2007) ch. 2). */
export function abruptWidthUm(n: number, v: number): number {
  return Math.sqrt((2 * SILICON_PERMITTIVITY_F_PER_CM * (v + 1)) / (ELEMENTARY_CHARGE_C * n)) * 1e4;
}

/** Baliga's one-sided abrupt breakdown law, V and µm (Fundamentals of Power Semiconductor Devices; from memory): a starting guess. */
function baligaGuess(n: number): { volts: number; widthUm: number } {
  return { volts: 5.34e13 * n ** -0.75, widthUm: 2.67e10 * n ** -0.875 * 1e4 };
}

export interface ElectrostaticGrid {
  mesh: PoissonMesh;
  net: Float64Array;
}

/**
 * The diffusion mesh thinned to `minUm` and extended below its bottom to `depthUm`, with the
 * bottom row's doping (rows growing by 1.25 up to `largestUm` apart).
 */
export function electrostaticGrid(mesh: Mesh, net: Float64Array, minUm: number, depthUm: number, largestUm: number): ElectrostaticGrid {
  const xi = thinnedAxis(mesh.x, minUm);
  const zi = thinnedAxis(mesh.z, minUm);
  const zs: number[] = Array.from(zi, (j) => mesh.z[j]);
  let step = zs[zs.length - 1] - zs[zs.length - 2];
  while (zs[zs.length - 1] < depthUm) {
    step = Math.min(step * 1.25, Math.max(minUm, largestUm));
    zs.push(zs[zs.length - 1] + step);
  }
  const x = Float64Array.from(xi, (i) => mesh.x[i]);
  const z = Float64Array.from(zs);
  const nx = x.length;
  const values = new Float64Array(nx * z.length);
  for (let j = 0; j < z.length; j++) {
    const row = j < zi.length ? zi[j] : mesh.nz - 1;
    for (let i = 0; i < nx; i++) values[j * nx + i] = net[row * mesh.nx + xi[i]];
  }
  return { mesh: poissonMesh(x, z, 0, mesh.widthUm), net: values };
}

/** Connected same-sign components: label of each node (n-type and p-type labelled apart). */
export function signComponents(net: Float64Array, nx: number, nz: number): { labels: Int32Array; bottom: Uint8Array } {
  const positive = new Uint8Array(net.length);
  const negative = new Uint8Array(net.length);
  for (let k = 0; k < net.length; k++) {
    positive[k] = net[k] > 0 ? 1 : 0;
    negative[k] = net[k] > 0 ? 0 : 1;
  }
  const a = labelRegions(positive, nx, nz);
  const b = labelRegions(negative, nx, nz);
  const labels = new Int32Array(net.length);
  for (let k = 0; k < net.length; k++) labels[k] = a.labels[k] > 0 ? a.labels[k] : a.count + b.labels[k];
  const bottom = new Uint8Array(a.count + b.count + 1);
  for (let k = (nz - 1) * nx; k < nz * nx; k++) bottom[labels[k]] = 1;
  return { labels, bottom };
}

export function nearestIndex(axis: Float64Array, v: number): number {
  let best = 0;
  for (let i = 1; i < axis.length; i++) if (Math.abs(axis[i] - v) < Math.abs(axis[best] - v)) best = i;
  return best;
}

function rounded(v: number | null, digits = 5): number | null {
  return v === null || !Number.isFinite(v) ? null : Number(v.toPrecision(digits));
}

export function electricalResults(mesh: Mesh, net: Float64Array, windows: readonly (readonly [number, number])[], options: ElectricalOptions): ElectricalResult {
  const model = options.model ?? VAN_OVERSTRAETEN_DE_MAN;
  const biases = [...options.biasV];
  const minUm = options.minSpacingUm ?? 2.5 * Math.min(finest(mesh.x), finest(mesh.z));
  // The deepest depletion to hold: the larger of the highest bias's and breakdown's, on the doping at the bottom.
  const bottomN = Math.max(Math.abs(net[(mesh.nz - 1) * mesh.nx]), 1e12);
  const reach = Math.max(abruptWidthUm(bottomN, Math.max(0, ...biases)), baligaGuess(bottomN).widthUm);
  // Rows added below at most 1/30 of that depletion apart.
  const grid = electrostaticGrid(mesh, net, minUm, mesh.depthUm + 1.2 * reach, reach / 30);
  const { nx, nz } = grid.mesh;
  const components = signComponents(grid.net, nx, nz);
  const warnings: string[] = [];
  const problems: (JunctionProblem | null)[] = [];
  const fields = options.keepFields ? emptyFields(grid.mesh, windows.length, biases.length) : undefined;
  const results = windows.map(([x0, x1], w) => {
    const centre = 0.5 * (x0 + x1);
    const ic = nearestIndex(grid.mesh.x, centre);
    const label = components.labels[ic];
    if (components.bottom[label] === 1 || grid.net[ic] === 0) {
      problems.push(null);
      return null;
    }
    const problem = windowProblem(grid, components.labels, label, x0, x1);
    problems.push(problem);
    const keep = fields ? (solver: PoissonSolver, b: number) => keepBias(fields, solver, w, b) : null;
    const result = solveWindow(grid, problem, ic, x0, x1, mesh.widthUm, biases, model, warnings, options.skipBreakdown === true, keep);
    // The region below: substrate if it reaches the bottom.
    let j = 0;
    while (j < nz && components.labels[j * nx + ic] === label) j++;
    result.biasAgainst = j < nz && components.bottom[components.labels[j * nx + ic]] === 1 ? 'substrate' : 'well';
    return result;
  });
  return { windows: results, warnings, columns: nx, rows: nz, ...(options.keepProblems ? { problems } : {}), ...(fields ? { fields } : {}) };
}

export function finest(axis: Float64Array): number {
  let h = Infinity;
  for (let i = 1; i < axis.length; i++) h = Math.min(h, axis[i] - axis[i - 1]);
  return h;
}

function windowProblem(grid: ElectrostaticGrid, labels: Int32Array, label: number, x0: number, x1: number): JunctionProblem {
  return regionsProblem(grid, labels, [label], [[x0, x1]]);
}

/**
 * The Poisson problem with the regions `chosen` (labels of one type) held at the bias together,
 * each contacted at the surface within the openings, against the contact at the bottom.
 */
export function regionsProblem(grid: ElectrostaticGrid, labels: Int32Array, chosen: readonly number[], openings: readonly (readonly [number, number])[]): JunctionProblem {
  const { nx, nz, x } = grid.mesh;
  const n = nx * nz;
  const sign = grid.net[labels.indexOf(chosen[0])] > 0 ? 1 : -1;
  const biased = new Uint8Array(n);
  const shifted = new Uint8Array(n);
  const contact = new Uint8Array(n);
  for (let k = 0; k < n; k++) {
    biased[k] = chosen.includes(labels[k]) ? 1 : 0;
    const sameType = sign > 0 ? grid.net[k] > 0 : !(grid.net[k] > 0);
    shifted[k] = biased[k] === 1 || !sameType ? 1 : 0;
  }
  for (let i = 0; i < nx; i++) {
    contact[(nz - 1) * nx + i] = 1;
    if (biased[i] === 1 && openings.some(([x0, x1]) => x[i] >= x0 && x[i] <= x1)) contact[i] = 1;
  }
  return { mesh: grid.mesh, net: grid.net, contact, shifted, biased, sign: sign as 1 | -1 };
}

function emptyFields(mesh: PoissonMesh, windows: number, biases: number): ElectricalFields {
  const n = windows * biases * mesh.nz * mesh.nx;
  const make = () => new Float64Array(n).fill(NaN);
  return { x: mesh.x, z: mesh.z, shape: [windows, biases, mesh.nz, mesh.nx], potentialV: make(), fieldVPerCm: make(), depletion: make() };
}

/** Copies window w's solution at bias b into the fields. */
function keepBias(fields: ElectricalFields, solver: PoissonSolver, w: number, b: number): void {
  const cells = solver.n;
  const at = (w * fields.shape[1] + b) * cells;
  fields.potentialV.set(solver.psi, at);
  const ex = new Float64Array(cells);
  const ez = new Float64Array(cells);
  const magnitude = new Float64Array(cells);
  electricField(solver.problem.mesh, solver.psi, ex, ez, magnitude);
  fields.fieldVPerCm.set(magnitude, at);
  for (let k = 0; k < cells; k++) fields.depletion[at + k] = solver.problem.biased[k] === 1 ? -0.5 : recovery(solver, k);
}

function solveWindow(grid: ElectrostaticGrid, problem: JunctionProblem, ic: number, x0: number, x1: number, widthUm: number, biases: number[], model: IonisationModel, warnings: string[], skipBreakdown: boolean,
  keep: ((solver: PoissonSolver, b: number) => void) | null): WindowElectrical {
  const { nx, nz, z } = grid.mesh;
  const solver = new PoissonSolver(problem);
  const lines = new FieldLines(grid.mesh);
  const column = new Float64Array(nz);
  for (let j = 0; j < nz; j++) column[j] = grid.net[j * nx + ic];
  const plane = planeProblem(z, column);
  const planeSolver = plane ? new PoissonSolver(plane) : null;
  const out: WindowElectrical = {
    biasAgainst: 'substrate', breakdownV: null, breakdownPlaneV: null, breakdownLimitedBy: null,
    peakFieldVPerCm: [], peakFieldAtUm: [], depletionDepthUm: [], depletionLateralUm: [], areaCapacitanceFPerCm2: [], perimeterCapacitanceFPerCm: [],
  };
  const where = `window [${x0}, ${x1}] µm`;
  let ok = solver.solve(0).converged && (planeSolver?.solve(0).converged ?? false);
  if (!ok) warnings.push(`electrostatics of the ${where} did not converge at 0 V`);
  const edges = (x0 > 0 ? 1 : 0) + (x1 < widthUm ? 1 : 0);
  for (const [b, v] of biases.entries()) {
    if (ok) ok = solver.continueTo(v).converged && planeSolver!.continueTo(v).converged;
    if (!ok) {
      warnings.push(`electrostatics of the ${where} did not converge at ${v} V: its results are null`);
      for (const list of [out.peakFieldVPerCm, out.peakFieldAtUm, out.depletionDepthUm, out.depletionLateralUm, out.areaCapacitanceFPerCm2, out.perimeterCapacitanceFPerCm]) list.push(null);
      continue;
    }
    keep?.(solver, b);
    lines.update(solver.psi);
    const peak = lines.peak();
    const pi = peak.k % nx;
    const pj = (peak.k - pi) / nx;
    out.peakFieldVPerCm.push(rounded(peak.fieldVPerCm));
    out.peakFieldAtUm.push([rounded(grid.mesh.x[pi])!, rounded(z[pj])!]);
    out.depletionDepthUm.push(rounded(depletionDepthUm(solver, ic)));
    const left = x0 > 0 ? depletionReachUm(solver, x0, -1) : null;
    const right = x1 < widthUm ? depletionReachUm(solver, x1, 1) : null;
    out.depletionLateralUm.push(rounded(left === null ? right : right === null ? left : Math.max(left, right)));
    const area = areaCapacitanceFPerCm2(planeSolver!);
    solver.tangent();
    const total = solver.regionCharge().capacitanceFPerCm;
    out.areaCapacitanceFPerCm2.push(rounded(area));
    out.perimeterCapacitanceFPerCm.push(edges > 0 ? rounded((total - area * (x1 - x0) * 1e-4) / edges) : null);
  }
  if (ok && !skipBreakdown) {
    const guess = baligaGuess(Math.abs(column[nz - 1])).volts;
    const planeBreakdown = searchBreakdown(planeSolver!, new FieldLines(plane!.mesh), model, guess);
    const regionBreakdown = searchBreakdown(solver, lines, model, planeBreakdown.breakdownV ?? guess);
    for (const [name, b] of [['plane junction below its centre', planeBreakdown], ['region', regionBreakdown]] as const) {
      if (b.failedAtV !== null) warnings.push(`breakdown search of the ${where} (${name}) stopped: electrostatics did not converge at ${rounded(b.failedAtV, 4)} V`);
    }
    out.breakdownPlaneV = rounded(planeBreakdown.breakdownV, 4);
    out.breakdownV = rounded(regionBreakdown.breakdownV, 4);
    if (out.breakdownV !== null && out.breakdownPlaneV !== null) {
      out.breakdownLimitedBy = out.breakdownV < out.breakdownPlaneV * 0.995 ? 'edge' : 'plane';
    }
  }
  return out;
}

/** Fields of a window's electrical result that get an error bar, each in its own unit. */
export const ELECTRICAL_ERROR_KEYS = ['breakdownV', 'breakdownPlaneV'] as const;
export const ELECTRICAL_LIST_ERROR_KEYS = ['peakFieldVPerCm', 'depletionDepthUm', 'depletionLateralUm', 'areaCapacitanceFPerCm2', 'perimeterCapacitanceFPerCm'] as const;

export interface ElectricalErrors {
  breakdownV?: number | null;
  breakdownPlaneV?: number | null;
  peakFieldVPerCm?: (number | null)[];
  depletionDepthUm?: (number | null)[];
  depletionLateralUm?: (number | null)[];
  areaCapacitanceFPerCm2?: (number | null)[];
  perimeterCapacitanceFPerCm?: (number | null)[];
}

export interface ElectricalReport {
  /** the reverse biases, V, in the recipe's order */
  biasV: number[];
  /** impact-ionisation coefficients the breakdown uses */
  ionisation: string;
  /** the electrostatic grid (the diffusion mesh thinned and extended below), nodes */
  mesh: { columns: number; rows: number; smallestSpacingUm: number };
  /** per window; null where the window has no junction to bias */
  windows: ((WindowElectrical & { errors?: ElectricalErrors }) | null)[];
}

function difference(a: number | null, b: number | null): number | null {
  return a === null || b === null ? null : rounded(Math.abs(a - b), 2);
}

/**
 * The electrical results for the report, with error bars from a second solve on a grid twice
 * as coarse: |f(h) − f(2h)|, the error of f(2h) at first order and a bound on f(h)'s (an abrupt
 * doping step between nodes makes the scheme first order; measured 5.6, 2.8, 1.4, 0.7 % in a
 * plane breakdown at h = 0.2 … 0.025 µm).
 */
export function electricalReport(mesh: Mesh, net: Float64Array, windows: readonly (readonly [number, number])[], options: ElectricalOptions, warnings: string[]): ElectricalReport & { fields?: ElectricalFields } {
  const h = options.minSpacingUm ?? 2.5 * Math.min(finest(mesh.x), finest(mesh.z));
  const fine = electricalResults(mesh, net, windows, { ...options, minSpacingUm: h });
  const coarse = electricalResults(mesh, net, windows, { ...options, minSpacingUm: 2 * h, keepFields: false });
  warnings.push(...fine.warnings);
  const model = options.model ?? VAN_OVERSTRAETEN_DE_MAN;
  return {
    ...(fine.fields ? { fields: fine.fields } : {}),
    biasV: [...options.biasV],
    ionisation: model.source,
    mesh: { columns: fine.columns, rows: fine.rows, smallestSpacingUm: rounded(h, 4)! },
    windows: fine.windows.map((w, k) => {
      const c = coarse.windows[k];
      if (w === null || c === null) return w;
      const errors: ElectricalErrors = {};
      for (const key of ELECTRICAL_ERROR_KEYS) errors[key] = difference(w[key], c[key]);
      for (const key of ELECTRICAL_LIST_ERROR_KEYS) errors[key] = w[key].map((v, b) => difference(v, c[key][b]));
      return { ...w, errors };
    }),
  };
}
