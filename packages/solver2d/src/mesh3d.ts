/**
 * Tensor mesh and mask of a 3D domain under a plan-view mask of rectangles.
 *
 * x and y (the surface plane) are cell-centred, with faces on the domain's walls and on every
 * rectangle edge, so each surface cell is wholly open or wholly masked. z (depth) is
 * vertex-centred with node 0 on the surface, as in the 2D mesh (mesh.ts). A symmetry plane
 * of the layout is a wall of the domain: zero flux through it is the mirror condition.
 *
 * Field layout: node (i, j, k) at (k·ny + j)·nx + i: x contiguous, then y, then z, the order
 * of the `[nz, ny, nx]` planes of field.npy.
 */

/** A rectangle of the mask, [x0, y0, x1, y1], µm. */
export type Rectangle = readonly [number, number, number, number];

export interface Mesh3d {
  widthUm: number;
  lengthUm: number;
  depthUm: number;
  /** x faces (nx + 1), centres and widths (nx) */
  xFaces: Float64Array;
  x: Float64Array;
  dx: Float64Array;
  /** y faces (ny + 1), centres and widths (ny) */
  yFaces: Float64Array;
  y: Float64Array;
  dy: Float64Array;
  /** z nodes (nz) from 0 to depthUm, and their control-volume thickness */
  z: Float64Array;
  dzVolume: Float64Array;
  nx: number;
  ny: number;
  nz: number;
}

function centres(faces: Float64Array): { c: Float64Array; d: Float64Array } {
  const n = faces.length - 1;
  const c = new Float64Array(n);
  const d = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    c[i] = 0.5 * (faces[i] + faces[i + 1]);
    d[i] = faces[i + 1] - faces[i];
  }
  return { c, d };
}

export function buildMesh3d(xFaces: Float64Array, yFaces: Float64Array, z: Float64Array): Mesh3d {
  const nx = xFaces.length - 1;
  const ny = yFaces.length - 1;
  const nz = z.length;
  if (nx < 2 || ny < 2 || nz < 3) throw new Error(`mesh too small: ${nx} × ${ny} columns, ${nz} planes`);
  const xs = centres(xFaces);
  const ys = centres(yFaces);
  const dzVolume = new Float64Array(nz);
  for (let k = 0; k < nz; k++) {
    const up = k > 0 ? z[k] - z[k - 1] : 0;
    const down = k < nz - 1 ? z[k + 1] - z[k] : 0;
    dzVolume[k] = 0.5 * (up + down);
  }
  return {
    widthUm: xFaces[nx], lengthUm: yFaces[ny], depthUm: z[nz - 1],
    xFaces, x: xs.c, dx: xs.d, yFaces, y: ys.c, dy: ys.d, z, dzVolume, nx, ny, nz,
  };
}

export interface Mask3d {
  /** rectangles as placed on the mesh's domain, µm */
  rectangles: readonly Rectangle[];
  /** 1 where the surface cell (j·nx + i) lies in a rectangle */
  open: Uint8Array;
}

/** Open cells: those whose centre lies inside a rectangle (faces lie on every edge). */
export function buildMask3d(mesh: Mesh3d, rectangles: readonly Rectangle[]): Mask3d {
  const { nx, ny, x, y } = mesh;
  const open = new Uint8Array(nx * ny);
  const bounds = Float64Array.from(rectangles.flat());
  openCells(open, x, y, bounds);
  return { rectangles, open };
}

function openCells(open: Uint8Array, x: Float64Array, y: Float64Array, bounds: Float64Array): void {
  const nx = x.length;
  for (let j = 0; j < y.length; j++) {
    const yc = y[j];
    for (let i = 0; i < nx; i++) {
      const xc = x[i];
      for (let r = 0; r + 3 < bounds.length; r += 4) {
        if (xc > bounds[r] && xc < bounds[r + 2] && yc > bounds[r + 1] && yc < bounds[r + 3]) open[j * nx + i] = 1;
      }
    }
  }
}

/** The open surface area, µm². */
export function openArea3d(mesh: Mesh3d, mask: Mask3d): number {
  let area = 0;
  for (let j = 0; j < mesh.ny; j++) {
    for (let i = 0; i < mesh.nx; i++) if (mask.open[j * mesh.nx + i] === 1) area += mesh.dx[i] * mesh.dy[j];
  }
  return area;
}
