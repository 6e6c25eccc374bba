/**
 * From the solver's mesh to drawable geometry, with no GPU objects (so it is unit-tested
 * in Node). x is cell-centred (x.npy holds the nx centres) and z is vertex-centred (z.npy
 * holds the nz nodes). The side walls are zero-flux faces, where the value equals the
 * first cell's, so the geometry adds a wall column at x = 0 and x = width, as the
 * junction finder does: the picture and the contours then both reach the walls.
 *
 * Vertices sit at the nodes, (nx + 2) × nz of them, row by row from the surface down;
 * world coordinates are (x, −z) in µm, so depth points down the screen.
 */
import { maskedStretches } from '@edgewise/solver2d';

export interface NodeGrid {
  /** node x positions with the walls added, µm (nx + 2) */
  xs: Float64Array;
  /** node depths, µm (nz) */
  zs: Float64Array;
  /** cells of the solver mesh across; the grid has columns + 2 node columns */
  columns: number;
  rows: number;
}

export function nodeGrid(xCentres: Float64Array, zNodes: Float64Array, widthUm: number): NodeGrid {
  const nx = xCentres.length;
  const xs = new Float64Array(nx + 2);
  xs[0] = 0;
  xs.set(xCentres, 1);
  xs[nx + 1] = widthUm;
  return { xs, zs: zNodes, columns: nx, rows: zNodes.length };
}

/** Vertex positions, xyz per node. */
export function gridPositions(grid: NodeGrid): Float32Array {
  const { xs, zs } = grid;
  const width = xs.length;
  const out = new Float32Array(3 * width * zs.length);
  let k = 0;
  for (let j = 0; j < zs.length; j++) {
    for (let i = 0; i < width; i++) {
      out[k++] = xs[i];
      out[k++] = -zs[j];
      out[k++] = 0;
    }
  }
  return out;
}

/** Two triangles per mesh quad, counter-clockwise as seen on screen (x right, −z up). */
export function gridIndices(grid: NodeGrid): Uint32Array {
  return subGridIndices(grid.xs.length, grid.zs.length);
}

/**
 * One layer of the field ([layers, nz, nx] C order) as a value per vertex: log10 of its
 * magnitude (floored at 1 cm^-3), wall columns copied from the first and last cells.
 */
export function layerVertexValues(field: Float64Array, layer: number, grid: NodeGrid, out?: Float32Array): Float32Array {
  const nx = grid.columns;
  const nz = grid.rows;
  const width = nx + 2;
  const values = out ?? new Float32Array(width * nz);
  const base = layer * nx * nz;
  for (let j = 0; j < nz; j++) {
    const src = base + j * nx;
    const dst = j * width;
    for (let i = 0; i < nx; i++) values[dst + i + 1] = Math.log10(Math.max(Math.abs(field[src + i]), 1));
    values[dst] = values[dst + 1];
    values[dst + width - 1] = values[dst + width - 2];
  }
  return values;
}

/** Line segments (pairs of xyz points) along every node column and row: the mesh overlay. */
export function meshLinePositions(grid: NodeGrid): Float32Array {
  const { xs, zs } = grid;
  const top = -zs[0];
  const bottom = -zs[zs.length - 1];
  const left = xs[0];
  const right = xs[xs.length - 1];
  const out = new Float32Array(6 * (xs.length + zs.length));
  let k = 0;
  for (const x of xs) {
    out.set([x, top, 0, x, bottom, 0], k);
    k += 6;
  }
  for (const z of zs) {
    out.set([left, -z, 0, right, -z, 0], k);
    k += 6;
  }
  return out;
}

/** Masked stretches of the surface: the complement of the windows in [0, width]. */
export function maskedIntervals(windows: readonly { x0Um: number; x1Um: number }[], widthUm: number): [number, number][] {
  return maskedStretches(windows.map((w) => [w.x0Um, w.x1Um] as const), widthUm);
}

/**
 * Node lines to keep along one axis so that kept neighbours are at least `minSpacing` apart
 * (µm): the level of detail for a view in which finer lines would fall within a pixel or
 * two of each other. The first and last lines (surface, bottom, walls) are always kept; a
 * coarse stretch of the mesh keeps every line. Every kept line is a mesh node line, so the
 * picture stays on the real mesh.
 */
export function thinAxis(coords: Float64Array, minSpacing: number): Uint32Array {
  const n = coords.length;
  if (!(minSpacing > 0) || n <= 2) return Uint32Array.from({ length: n }, (_, k) => k);
  const keep: number[] = [0];
  for (let i = 1; i < n - 1; i++) if (coords[i] - coords[keep[keep.length - 1]] >= minSpacing) keep.push(i);
  // The last line is kept; the one before it goes if the two are too close.
  if (keep.length > 1 && coords[n - 1] - coords[keep[keep.length - 1]] < minSpacing) keep.pop();
  keep.push(n - 1);
  return Uint32Array.from(keep);
}

/** A sub-grid of node lines: what a level of detail draws. */
export interface SubGrid {
  columns: Uint32Array;
  rows: Uint32Array;
}

export function subGridPositions(grid: NodeGrid, sub: SubGrid): Float32Array {
  const out = new Float32Array(3 * sub.columns.length * sub.rows.length);
  let k = 0;
  for (const j of sub.rows) {
    for (const i of sub.columns) {
      out[k++] = grid.xs[i];
      out[k++] = -grid.zs[j];
      out[k++] = 0;
    }
  }
  return out;
}

/** Values at the sub-grid's nodes, from values at every node of the full grid (row by row). */
export function subGridValues(full: Float32Array, grid: NodeGrid, sub: SubGrid): Float32Array {
  const width = grid.xs.length;
  const out = new Float32Array(sub.columns.length * sub.rows.length);
  let k = 0;
  for (const j of sub.rows) for (const i of sub.columns) out[k++] = full[j * width + i];
  return out;
}

/** Triangles of a sub-grid with `columns` × `rows` nodes (same winding as gridIndices). */
export function subGridIndices(columns: number, rows: number): Uint32Array {
  const out = new Uint32Array(6 * (columns - 1) * (rows - 1));
  let k = 0;
  for (let j = 0; j + 1 < rows; j++) {
    for (let i = 0; i + 1 < columns; i++) {
      const a = j * columns + i;
      const b = a + 1;
      const c = a + columns;
      const d = c + 1;
      out[k++] = a; out[k++] = c; out[k++] = b;
      out[k++] = b; out[k++] = c; out[k++] = d;
    }
  }
  return out;
}
