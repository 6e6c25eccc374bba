import ndarray from 'ndarray';
import { CORNERS, EDGES, type Analysis, type CornerName, type EdgeName, type RectangleReport, type Report } from './report.ts';
import type { Field } from './field.ts';
import { junctionIndicator, zeroContours, type NodeGrid } from './junction.ts';
import { finestX, finestZ } from './mesh.ts';
import type { Rectangle } from './mesh3d.ts';
import { columnUnder, gridValueAt, reachAlong } from './reach3d.ts';
import type { Simulation } from './simulate.ts';
import { fold, fullAxes, unfoldAxis, type Space3d } from './space3d.ts';

/*
 * The report of a 3D solve (mask.rectangles): per rectangle the junction depth under its
 * centre, the reach of the surface junction beyond the mask at the middle of each straight
 * edge (along the outward normal) and at each corner (along the outward diagonal), and the
 * surface outline of every junction in the plan view. Measured on the indicator
 * log10 N_D − log10 N_A (junction.ts), signed positive in the region opposite to the
 * substrate; in the full cross-section's coordinates, the mirrored parts unfolded.
 */

function rounded(v: number, digits = 6): number {
  return Number(v.toPrecision(digits));
}

/** Plane k of `values` (on the solved part) as a node grid over the full plan view. */
export function unfoldedPlane(space: Space3d, values: Float64Array, k: number): NodeGrid {
  const { mesh } = space;
  const ax = unfoldAxis(mesh.x, mesh.widthUm, space.mirrorX, space.widthUm);
  const ay = unfoldAxis(mesh.y, mesh.lengthUm, space.mirrorY, space.lengthUm);
  const px = ax.nodes.length;
  const py = ay.nodes.length;
  const out = new Float64Array(px * py);
  const base = k * mesh.nx * mesh.ny;
  for (let j = 0; j < py; j++) {
    const row = base + ay.cell[j] * mesh.nx;
    for (let i = 0; i < px; i++) out[j * px + i] = values[row + ax.cell[i]];
  }
  return { xs: ax.nodes, zs: ay.nodes, values: out, nx: px, nz: py };
}

/** Whether (x, y) lies inside one of the rectangles. */
function inWindow(rectangles: readonly Rectangle[], x: number, y: number): boolean {
  for (const [x0, y0, x1, y1] of rectangles) if (x > x0 && x < x1 && y > y0 && y < y1) return true;
  return false;
}

/** Distance from (x, y) along (ux, uy) to the cross-section's boundary. */
function toWall(space: Space3d, x: number, y: number, ux: number, uy: number): number {
  const tx = ux > 0 ? (space.widthUm - x) / ux : ux < 0 ? -x / ux : Infinity;
  const ty = uy > 0 ? (space.lengthUm - y) / uy : uy < 0 ? -y / uy : Infinity;
  return Math.min(tx, ty);
}

/** Reach from (x, y) along (ux, uy) on the unfolded surface, or null where the start is not inside the junction. */
function reachFrom(space: Space3d, grid: NodeGrid, x: number, y: number, ux: number, uy: number, step: number): number | null {
  if (!(gridValueAt(grid, x, y) > 0)) return null;
  const limit = toWall(space, x, y, ux, uy);
  const r = reachAlong(grid, x, y, ux, uy, limit, step);
  return r === null ? null : rounded(r);
}

/** Junction depth under (x, y) of the full cross-section, µm, or null. */
function depthUnder(space: Space3d, indicator: Float64Array, x: number, y: number, column: Float64Array): number | null {
  const f = fold(space, x, y);
  columnUnder(space.mesh, indicator, f.x, f.y, column);
  const { z, nz } = space.mesh;
  for (let k = 0; k + 1 < nz; k++) {
    const a = column[k];
    const b = column[k + 1];
    if ((a > 0) !== (b > 0)) return z[k] + (z[k + 1] - z[k]) * (a / (a - b));
  }
  return null;
}

function rectangleReport(space: Space3d, grid: NodeGrid, indicator: Float64Array, r: Rectangle, step: number, column: Float64Array): RectangleReport {
  const [x0, y0, x1, y1] = r;
  const all = space.rectangles;
  const eps = 1e-6 * Math.max(space.widthUm, space.lengthUm);
  const xm = 0.5 * (x0 + x1);
  const ym = 0.5 * (y0 + y1);
  const depth = depthUnder(space, indicator, xm, ym, column);
  // An edge's middle counts where it lies on a straight stretch of the outline: window behind
  // it and mask ahead, on either side of it along the edge (the middle of an L's long inner
  // edge can be the inside corner, where a ray along the normal runs down the other edge).
  const side = (x: number, y: number, nx: number, ny: number, ahead: number, along: number) =>
    inWindow(all, x + eps * (ahead * nx - along * ny), y + eps * (ahead * ny + along * nx));
  const edge = (x: number, y: number, nx: number, ny: number): number | null =>
    side(x, y, nx, ny, -1, -1) && side(x, y, nx, ny, -1, 1) && !side(x, y, nx, ny, 1, -1) && !side(x, y, nx, ny, 1, 1)
      ? reachFrom(space, grid, x, y, nx, ny, step) : null;
  const edgeReachUm: Record<EdgeName, number | null> = {
    left: edge(x0, ym, -1, 0), right: edge(x1, ym, 1, 0), bottom: edge(xm, y0, 0, -1), top: edge(xm, y1, 0, 1),
  };
  const cornerReachUm = {} as Record<CornerName, number | null>;
  const cornerKind = {} as Record<CornerName, 'convex' | 'concave' | null>;
  const points: Record<CornerName, [number, number]> = { bottomLeft: [x0, y0], bottomRight: [x1, y0], topLeft: [x0, y1], topRight: [x1, y1] };
  for (const name of CORNERS) {
    const [cx, cy] = points[name];
    const quadrants: [number, number][] = [[1, 1], [-1, 1], [-1, -1], [1, -1]];
    const filled = quadrants.filter(([sx, sy]) => inWindow(all, cx + eps * sx, cy + eps * sy));
    const empty = quadrants.filter(([sx, sy]) => !inWindow(all, cx + eps * sx, cy + eps * sy));
    let dir: [number, number] | null = null;
    if (filled.length === 1) {
      dir = [-filled[0][0], -filled[0][1]];
      cornerKind[name] = 'convex';
    } else if (filled.length === 3) {
      dir = empty[0];
      cornerKind[name] = 'concave';
    } else cornerKind[name] = null;
    cornerReachUm[name] = dir ? reachFrom(space, grid, cx, cy, dir[0] * Math.SQRT1_2, dir[1] * Math.SQRT1_2, step) : null;
  }
  const edges = EDGES.map((e) => edgeReachUm[e]).filter((v): v is number => v !== null);
  const meanEdge = edges.length > 0 ? edges.reduce((a, b) => a + b, 0) / edges.length : null;
  const cornerToEdgeRatio = {} as Record<CornerName, number | null>;
  for (const name of CORNERS) {
    const c = cornerReachUm[name];
    cornerToEdgeRatio[name] = c !== null && meanEdge ? rounded(c / meanEdge, 4) : null;
  }
  return {
    x0Um: x0, y0Um: y0, x1Um: x1, y1Um: y1,
    junctionDepthUm: depth === null ? null : rounded(depth),
    edgeReachUm, cornerReachUm, cornerKind, cornerToEdgeRatio,
  };
}

/** Donor and acceptor totals, net doping, and the signed junction indicator on the solved part. */
function field3d(sim: Simulation, space: Space3d): { field: Field; indicator: Float64Array } {
  const { plan } = sim;
  const cells = space.mesh.nx * space.mesh.ny * space.mesh.nz;
  const donors = new Float64Array(cells);
  const acceptors = new Float64Array(cells);
  (plan.substrate.type === 'donor' ? donors : acceptors).fill(plan.substrate.concentrationCm3);
  for (const s of plan.species) {
    const target = s.type === 'donor' ? donors : acceptors;
    const c = sim.concentration[s.name];
    for (let p = 0; p < cells; p++) target[p] += c[p];
  }
  const net = new Float64Array(cells);
  for (let p = 0; p < cells; p++) net[p] = donors[p] - acceptors[p];
  const shape = [space.mesh.nz, space.mesh.ny, space.mesh.nx];
  const layers: Field['layers'] = { net: ndarray(net, shape) };
  for (const s of plan.species) layers[s.name] = ndarray(sim.concentration[s.name], shape);
  const indicator = junctionIndicator(donors, acceptors, new Float64Array(cells));
  if (plan.substrate.type === 'donor') for (let p = 0; p < cells; p++) indicator[p] = -indicator[p];
  return { field: { mesh: plan.mesh, names: ['net', ...plan.species.map((s) => s.name)], layers, donors, acceptors, space }, indicator };
}

/** The report of a 3D solve (see the comment at the top). */
export function analyze3d(sim: Simulation, space: Space3d): Analysis {
  const { plan } = sim;
  const { mesh } = space;
  const { field, indicator } = field3d(sim, space);
  const grid = unfoldedPlane(space, indicator, 0);
  let finest = Infinity;
  for (const v of mesh.dx) finest = Math.min(finest, v);
  for (const v of mesh.dy) finest = Math.min(finest, v);
  const column = new Float64Array(mesh.nz);
  const rectangles = space.rectangles.map((r) => rectangleReport(space, grid, indicator, r, 0.25 * finest, column));
  const warnings = [...plan.warnings];
  const bottom = (mesh.nz - 1) * mesh.nx * mesh.ny;
  for (let p = 0; p < mesh.nx * mesh.ny; p++) {
    if (indicator[bottom + p] > 0) {
      warnings.push(`the diffused region reaches the bottom of the domain (${rounded(mesh.depthUm, 4)} µm): the deepest junction is not inside it; give a larger crossSection.depthUm`);
      break;
    }
  }
  const doseCm2: Record<string, number> = {};
  for (const s of plan.species) doseCm2[s.name] = rounded(sim.ledger[s.name].inSiliconCm2);
  const axes = fullAxes(space);
  const outlines = zeroContours(grid).map((line) => ({ polylinesUm: [line.map(([x, y]) => [rounded(x), rounded(y)] as [number, number])] }));
  const report: Report = {
    schema: 'edgewise.report/1',
    title: plan.recipe.title ?? null,
    substrate: { ...plan.substrate },
    crossSection: { widthUm: space.widthUm, lengthUm: space.lengthUm, depthUm: rounded(mesh.depthUm) },
    mesh: {
      columns: mesh.nx, rows: mesh.nz, finestXUm: rounded(finestX(plan.mesh), 4), finestZUm: rounded(finestZ(plan.mesh), 4),
      columnsY: mesh.ny, finestYUm: rounded(Math.min(...mesh.dy), 4),
    },
    windows: [],
    rectangles,
    plan: { outlines, mirrorX: space.mirrorX, mirrorY: space.mirrorY },
    junctions: [],
    doseCm2,
    // The active dose is the total's scaled by the ratio of the active to the total content.
    activation: Object.fromEntries(plan.species.map((s) => [s.name, {
      totalDoseCm2: doseCm2[s.name],
      activeDoseCm2: rounded(doseCm2[s.name] * contentOf(sim.active[s.name] ?? sim.concentration[s.name], mesh) / Math.max(contentOf(sim.concentration[s.name], mesh), 1e-300)),
      peakActiveCm3: rounded(peakOf(sim.active[s.name] ?? sim.concentration[s.name])), peakTotalCm3: rounded(peakOf(sim.concentration[s.name])),
    }])),
    models: plan.models.map((m) => ({ ...m, species: [...m.species] })),
    ledger: sim.ledger,
    thermalBudgetUm2: Object.fromEntries(Object.entries(plan.thermalBudgetUm2).map(([k, v]) => [k, rounded(v)])),
    steps: sim.stepRecords.map((r) => ({
      index: r.index, kind: r.kind, temperatureC: plan.steps[r.index].temperatureC,
      thermalBudgetUm2: Object.fromEntries(Object.entries(plan.steps[r.index].budgetUm2).map(([k, v]) => [k, rounded(v)])),
      minutes: r.seconds / 60, timeSteps: r.timeSteps,
    })),
    field: { layers: field.names, shape: [field.names.length, mesh.nz, axes.y.length, axes.x.length] },
    warnings,
  };
  return { report, field, grid };
}

/** The largest value of a field. */
function peakOf(v: Float64Array): number {
  let top = 0;
  for (let k = 0; k < v.length; k++) top = v[k] > top ? v[k] : top;
  return top;
}

/** ∫∫∫C dx dy dz over the domain (x-contiguous [z][y][x]). */
function contentOf(c: Float64Array, mesh: { dx: Float64Array; dy: Float64Array; dzVolume: Float64Array }): number {
  const nx = mesh.dx.length;
  const ny = mesh.dy.length;
  let sum = 0;
  for (let k = 0, p = 0; k < mesh.dzVolume.length; k++) {
    let plane = 0;
    for (let j = 0; j < ny; j++) {
      let row = 0;
      for (let i = 0; i < nx; i++, p++) row += c[p] * mesh.dx[i];
      plane += row * mesh.dy[j];
    }
    sum += plane * mesh.dzVolume[k];
  }
  return sum;
}
