import type { Mesh } from './mesh.ts';

/**
 * The diffused regions of a cross-section: connected sets of mesh nodes whose doping is of the
 * type opposite to the substrate. Two nodes are connected when they are neighbours along x or
 * z (not diagonally), the same rule the contour follows between two inverted corners.
 */
export interface Regions {
  /** 0 outside every region, 1…count inside; row-major [z][x] like the field */
  labels: Int32Array;
  count: number;
}

/** 1 where the node's doping is of the type opposite to the substrate. */
export function invertedNodes(donors: Float64Array, acceptors: Float64Array, substrateType: string): Uint8Array {
  const out = new Uint8Array(donors.length);
  if (substrateType === 'donor') for (let k = 0; k < out.length; k++) out[k] = acceptors[k] > donors[k] ? 1 : 0;
  else for (let k = 0; k < out.length; k++) out[k] = donors[k] > acceptors[k] ? 1 : 0;
  return out;
}

export function labelRegions(inverted: Uint8Array, nx: number, nz: number): Regions {
  const cells = nx * nz;
  const labels = new Int32Array(cells);
  const stack = new Int32Array(cells);
  let count = 0;
  for (let seed = 0; seed < cells; seed++) {
    if (inverted[seed] !== 1 || labels[seed] !== 0) continue;
    count++;
    let top = 0;
    stack[top++] = seed;
    labels[seed] = count;
    while (top > 0) {
      const k = stack[--top];
      const i = k % nx;
      // Each node enters the stack once: it is labelled when pushed.
      if (i > 0 && inverted[k - 1] === 1 && labels[k - 1] === 0) { labels[k - 1] = count; stack[top++] = k - 1; }
      if (i + 1 < nx && inverted[k + 1] === 1 && labels[k + 1] === 0) { labels[k + 1] = count; stack[top++] = k + 1; }
      if (k >= nx && inverted[k - nx] === 1 && labels[k - nx] === 0) { labels[k - nx] = count; stack[top++] = k - nx; }
      if (k + nx < cells && inverted[k + nx] === 1 && labels[k + nx] === 0) { labels[k + nx] = count; stack[top++] = k + nx; }
    }
  }
  return { labels, count };
}

/** Index of the mesh column whose centre is nearest to x. */
function nearestColumn(mesh: Mesh, x: number): number {
  let best = 0;
  for (let i = 1; i < mesh.nx; i++) if (Math.abs(mesh.x[i] - x) < Math.abs(mesh.x[best] - x)) best = i;
  return best;
}

/** Label of the region holding the surface node nearest to x; 0 when that node is not inverted. */
export function surfaceRegionAt(regions: Regions, mesh: Mesh, x: number): number {
  return regions.labels[nearestColumn(mesh, x)];
}

/** True where the region `label` holds a node of the bottom row: for the substrate's type, joined to the substrate. */
export function reachesBottom(regions: Regions, label: number, nx: number, nz: number): boolean {
  const { labels } = regions;
  for (let k = (nz - 1) * nx; k < nz * nx; k++) if (labels[k] === label) return true;
  return false;
}
