import type { Mesh } from './mesh.ts';

export type Window = readonly [number, number];

/** A run of surface cells that are all open or all masked, [i0, i1). */
interface SurfaceSegment {
  i0: number;
  i1: number;
  open: boolean;
}

export interface Mask {
  /** windows as given, µm */
  windows: readonly Window[];
  /** indices into `windows` in x order */
  order: number[];
  /** neighbouring windows in x order, as index pairs into `windows` (left, right) */
  pairs: [number, number][];
  /** 1 where the surface cell lies in a window */
  open: Uint8Array;
  /** the surface as alternating runs of open and masked cells */
  segments: SurfaceSegment[];
  /** mask edges strictly inside the cross-section, µm, ascending */
  edges: number[];
}

/** Indices of the windows in x order (by left edge; windows do not overlap). */
export function windowOrder(windows: readonly Window[]): number[] {
  return windows.map((_, k) => k).sort((p, q) => windows[p][0] - windows[q][0]);
}

/** Masked stretches of the surface, in x order: the complement of the windows in [0, width], µm. */
export function maskedStretches(windows: readonly Window[], widthUm: number): [number, number][] {
  const out: [number, number][] = [];
  let from = 0;
  for (const k of windowOrder(windows)) {
    const [x0, x1] = windows[k];
    if (x0 > from) out.push([from, x0]);
    from = Math.max(from, x1);
  }
  if (from < widthUm) out.push([from, widthUm]);
  return out;
}

/** Neighbouring windows in x order, as index pairs into `windows`. */
function neighbourPairs(windows: readonly Window[]): [number, number][] {
  const order = windowOrder(windows);
  const pairs: [number, number][] = [];
  for (let m = 1; m < order.length; m++) pairs.push([order[m - 1], order[m]]);
  return pairs;
}

/** Mask edges that are not side walls; a window that touches a wall has no edge there. */
export function maskEdges(windows: readonly Window[], widthUm: number): number[] {
  const edges: number[] = [];
  for (const [x0, x1] of windows) {
    if (x0 > 0) edges.push(x0);
    if (x1 < widthUm) edges.push(x1);
  }
  return edges.sort((a, b) => a - b);
}

export function buildMask(mesh: Mesh, windows: readonly Window[]): Mask {
  const open = new Uint8Array(mesh.nx);
  openCells(open, mesh.x, Float64Array.from(windows.flat()));
  const segments: SurfaceSegment[] = [];
  let start = 0;
  for (let i = 1; i <= mesh.nx; i++) {
    if (i === mesh.nx || open[i] !== open[start]) {
      segments.push({ i0: start, i1: i, open: open[start] === 1 });
      start = i;
    }
  }
  return { windows, order: windowOrder(windows), pairs: neighbourPairs(windows), open, segments, edges: maskEdges(windows, mesh.widthUm) };
}

/**
 * open[i] = 1 where the cell centre x[i] lies inside a window, `bounds` the windows' ends in
 * pairs. On typed arrays, whatever the windows' values: a window at whole micrometres and one
 * at half micrometres are arrays of different element kinds, and a sweep that meets both
 * undid this loop's compiled code each time it changed.
 */
function openCells(open: Uint8Array, x: Float64Array, bounds: Float64Array): void {
  for (let i = 0; i < x.length; i++) {
    const xc = x[i];
    for (let w = 0; w + 1 < bounds.length; w += 2) if (xc > bounds[w] && xc < bounds[w + 1]) open[i] = 1;
  }
}
