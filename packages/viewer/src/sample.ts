import type { NodeGrid } from './mesh-geometry.ts';

/**
 * The field at a point of the cross-section: bilinear between the four surrounding nodes,
 * in concentration itself (not its log), so a readout at a node is that node's value and
 * net doping keeps its sign through the junction. Walls take the first cell's value.
 */

/** Index i with xs[i] ≤ v ≤ xs[i+1], clamped to the grid. */
export function bracket(xs: Float64Array, v: number): number {
  let lo = 0;
  let hi = xs.length - 1;
  if (v <= xs[0]) return 0;
  if (v >= xs[hi]) return hi - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid] <= v) lo = mid;
    else hi = mid;
  }
  return lo;
}

export interface Sample {
  xUm: number;
  zUm: number;
  /** value of each layer at the point, in layer order, cm^-3 */
  values: number[];
}

/** Value of one layer at the padded node (i, j) of the grid; i = 0 and i = nx + 1 are the walls. */
function nodeValue(field: Float64Array, layer: number, grid: NodeGrid, i: number, j: number): number {
  const nx = grid.columns;
  const cell = Math.min(nx - 1, Math.max(0, i - 1));
  return field[layer * nx * grid.rows + j * nx + cell];
}

export function sampleField(field: Float64Array, layers: number, grid: NodeGrid, xUm: number, zUm: number): Sample | null {
  const { xs, zs } = grid;
  if (xUm < xs[0] || xUm > xs[xs.length - 1] || zUm < zs[0] || zUm > zs[zs.length - 1]) return null;
  const i = bracket(xs, xUm);
  const j = bracket(zs, zUm);
  const tx = (xUm - xs[i]) / (xs[i + 1] - xs[i]);
  const tz = (zUm - zs[j]) / (zs[j + 1] - zs[j]);
  const values: number[] = [];
  for (let l = 0; l < layers; l++) {
    const v00 = nodeValue(field, l, grid, i, j), v10 = nodeValue(field, l, grid, i + 1, j);
    const v01 = nodeValue(field, l, grid, i, j + 1), v11 = nodeValue(field, l, grid, i + 1, j + 1);
    values.push((1 - tz) * ((1 - tx) * v00 + tx * v10) + tz * ((1 - tx) * v01 + tx * v11));
  }
  return { xUm, zUm, values };
}

/** Which side of the junction a net doping value is on. */
export function junctionSide(netCm3: number): string {
  if (netCm3 > 0) return 'n-type side (donors exceed acceptors)';
  if (netCm3 < 0) return 'p-type side (acceptors exceed donors)';
  return 'on the junction';
}
