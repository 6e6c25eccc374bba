import { peakMemoryMiB } from './plan-terms.ts';
import { gradedAxis, gradedAxisCells, type SpacingRule } from './mesh.ts';
import { buildMask3d, buildMesh3d, type Mask3d, type Mesh3d, type Rectangle } from './mesh3d.ts';
import { RecipeError } from './recipe-terms.ts';

/**
 * The 3D domain of a recipe with `mask.rectangles`: the rectangles checked, the mirror planes
 * of the layout found, and the mesh of the part that is solved. A layout that is its own
 * mirror image about x = W/2 (or y = L/2) is solved on the half x ≤ W/2 (y ≤ L/2): the
 * mirror plane is a zero-flux wall, exact for a symmetric layout (a single centred rectangle
 * needs a quarter). Results are given in the full cross-section's coordinates: `fold` maps a
 * point of it to the solved part.
 */
export interface Space3d {
  /** the rectangles as given, µm, in the full cross-section */
  rectangles: Rectangle[];
  widthUm: number;
  lengthUm: number;
  /** mirror planes used at x = W/2 and y = L/2 */
  mirrorX: boolean;
  mirrorY: boolean;
  /** mesh and mask of the solved part [0, W or W/2] × [0, L or L/2] */
  mesh: Mesh3d;
  mask: Mask3d;
}

/** Rectangle edges closer than this to each other or to a wall (but not on it) are refused, µm. */
const MIN_FEATURE_UM = 1e-3;

function describe(r: Rectangle): string {
  return `[${r.join(', ')}] µm`;
}

/**
 * Each rectangle positive and inside the cross-section; no two overlapping (touching along an
 * edge is allowed: their union is one window); no two edge coordinates closer than
 * MIN_FEATURE_UM without being equal (a sliver of a cell between them).
 */
export function checkRectangles(rectangles: readonly Rectangle[], widthUm: number, lengthUm: number): void {
  rectangles.forEach(([x0, y0, x1, y1], k) => {
    const field = `mask.rectangles[${k}]`;
    if (!(x1 > x0) || !(y1 > y0)) throw new RecipeError(field, `must have x1 > x0 and y1 > y0: [x0, y0, x1, y1] with positive width and length (got ${describe(rectangles[k])})`);
    if (x1 > widthUm || y1 > lengthUm) {
      throw new RecipeError(field, `must lie inside the cross-section [0, ${widthUm}] × [0, ${lengthUm}] µm (crossSection.widthUm × lengthUm; got ${describe(rectangles[k])})`);
    }
    if (x1 - x0 < MIN_FEATURE_UM || y1 - y0 < MIN_FEATURE_UM) throw new RecipeError(field, `must be at least ${MIN_FEATURE_UM} µm wide and long (got ${describe(rectangles[k])})`);
  });
  for (let a = 0; a < rectangles.length; a++) {
    for (let b = a + 1; b < rectangles.length; b++) {
      const [ax0, ay0, ax1, ay1] = rectangles[a];
      const [bx0, by0, bx1, by1] = rectangles[b];
      const overlapX = Math.min(ax1, bx1) - Math.max(ax0, bx0);
      const overlapY = Math.min(ay1, by1) - Math.max(ay0, by0);
      if (overlapX > 0 && overlapY > 0) {
        throw new RecipeError(`mask.rectangles[${b}]`, `overlaps mask.rectangles[${a}] (${describe(rectangles[b])} and ${describe(rectangles[a])}); rectangles may touch along an edge, their union being the window, but not overlap: split them into touching ones`);
      }
    }
  }
  for (const [axis, length, picks] of [['x', widthUm, [0, 2]], ['y', lengthUm, [1, 3]]] as const) {
    const coords = [...new Set([0, length, ...rectangles.flatMap((r) => [r[picks[0]], r[picks[1]]])])].sort((p, q) => p - q);
    for (let m = 1; m < coords.length; m++) {
      if (coords[m] - coords[m - 1] < MIN_FEATURE_UM) {
        throw new RecipeError('mask.rectangles', `have ${axis} edges ${coords[m - 1]} and ${coords[m]} µm (or a wall) closer than ${MIN_FEATURE_UM} µm: put them on one line or at least ${MIN_FEATURE_UM} µm apart`);
      }
    }
  }
}

function sameSet(a: Rectangle[], b: Rectangle[]): boolean {
  const key = (r: Rectangle) => r.map((v) => v.toFixed(9)).join(',');
  const sa = a.map(key).sort();
  const sb = b.map(key).sort();
  return sa.every((v, k) => v === sb[k]);
}

/** Whether the layout is its own mirror image about x = W/2 and about y = L/2. */
export function layoutMirrors(rectangles: readonly Rectangle[], widthUm: number, lengthUm: number): { x: boolean; y: boolean } {
  const list = [...rectangles];
  const x = sameSet(list, list.map(([x0, y0, x1, y1]) => [widthUm - x1, y0, widthUm - x0, y1] as const));
  const y = sameSet(list, list.map(([x0, y0, x1, y1]) => [x0, lengthUm - y1, x1, lengthUm - y0] as const));
  return { x, y };
}

/** The rectangles' parts inside [0, w] × [0, l]. */
function clipped(rectangles: readonly Rectangle[], w: number, l: number): Rectangle[] {
  const out: Rectangle[] = [];
  for (const [x0, y0, x1, y1] of rectangles) {
    const c: Rectangle = [x0, y0, Math.min(x1, w), Math.min(y1, l)];
    if (c[2] > c[0] && c[3] > c[1]) out.push(c);
  }
  return out;
}

/**
 * Size and build the domain: lateral faces on every rectangle edge, graded by `lateral` in
 * x and y from every edge inside the solved part, and the depth nodes `z`. The point count
 * is checked against `maxMeshPoints` before any field-sized array exists.
 */
export function buildSpace3d(rectangles: readonly Rectangle[], widthUm: number, lengthUm: number, lateral: SpacingRule,
                             zCount: number, z: () => Float64Array, maxMeshPoints: number): Space3d {
  checkRectangles(rectangles, widthUm, lengthUm);
  const mirror = layoutMirrors(rectangles, widthUm, lengthUm);
  const w = mirror.x ? widthUm / 2 : widthUm;
  const l = mirror.y ? lengthUm / 2 : lengthUm;
  const part = clipped(rectangles, w, l);
  const inside = (v: number, length: number) => v > 0 && v < length;
  const xs = [...new Set(part.flatMap((r) => [r[0], r[2]]))].filter((v) => inside(v, w));
  const ys = [...new Set(part.flatMap((r) => [r[1], r[3]]))].filter((v) => inside(v, l));
  const nx = gradedAxisCells(w, xs, xs, lateral);
  const ny = gradedAxisCells(l, ys, ys, lateral);
  const points = nx * ny * zCount;
  if (points > maxMeshPoints) {
    throw new RecipeError('mesh', `would need ${points} mesh points (${nx} × ${ny} × ${zCount}${mirror.x || mirror.y ? ' on the part left by the mirror planes' : ''}, about ${Math.ceil(peakMemoryMiB(points, 3))} MiB at the peak), above the limit of ${maxMeshPoints}; lower mesh.refine or raise the limit`);
  }
  const mesh = buildMesh3d(gradedAxis(w, xs, xs, lateral), gradedAxis(l, ys, ys, lateral), z());
  return { rectangles: [...rectangles], widthUm, lengthUm, mirrorX: mirror.x, mirrorY: mirror.y, mesh, mask: buildMask3d(mesh, part) };
}

/** A point of the full cross-section mapped into the solved part, and the sign a direction takes there. */
export function fold(space: Space3d, x: number, y: number): { x: number; y: number; sx: number; sy: number } {
  const fx = space.mirrorX && x > space.widthUm / 2;
  const fy = space.mirrorY && y > space.lengthUm / 2;
  return { x: fx ? space.widthUm - x : x, y: fy ? space.lengthUm - y : y, sx: fx ? -1 : 1, sy: fy ? -1 : 1 };
}

/** A cell-centred axis of the solved part, unfolded to the full length: the nodes (walls included) and each node's cell. */
export function unfoldAxis(centres: Float64Array, part: number, mirrored: boolean, full: number): { nodes: Float64Array; cell: Int32Array } {
  const n = centres.length;
  const nodes: number[] = [0, ...centres, part];
  const cell: number[] = [0, ...Array.from({ length: n }, (_, i) => i), n - 1];
  if (mirrored) {
    for (let i = n - 1; i >= 0; i--) {
      nodes.push(full - centres[i]);
      cell.push(i);
    }
    nodes.push(full);
    cell.push(0);
  }
  return { nodes: Float64Array.from(nodes), cell: Int32Array.from(cell) };
}

/** The solved part's values unfolded to the full cross-section, [nz][ny][nx] with x contiguous, and its cell centres. */
export function unfoldedVolume(space: Space3d, values: Float64Array, out: Float64Array, offset: number): void {
  const { mesh } = space;
  const ax = unfoldAxis(mesh.x, mesh.widthUm, space.mirrorX, space.widthUm);
  const ay = unfoldAxis(mesh.y, mesh.lengthUm, space.mirrorY, space.lengthUm);
  // Cell centres only: drop the wall nodes of the unfolded axes.
  const cx = ax.cell.subarray(1, ax.cell.length - 1).filter((_, i) => !(space.mirrorX && i === mesh.nx));
  const cy = ay.cell.subarray(1, ay.cell.length - 1).filter((_, j) => !(space.mirrorY && j === mesh.ny));
  const nxf = cx.length;
  const nyf = cy.length;
  let o = offset;
  for (let k = 0; k < mesh.nz; k++) {
    for (let j = 0; j < nyf; j++) {
      const row = (k * mesh.ny + cy[j]) * mesh.nx;
      for (let i = 0; i < nxf; i++) out[o++] = values[row + cx[i]];
    }
  }
}

/** Cell centres of the full cross-section along x and y, µm. */
export function fullAxes(space: Space3d): { x: Float64Array; y: Float64Array } {
  const { mesh } = space;
  const unfold = (c: Float64Array, mirrored: boolean, full: number) =>
    mirrored ? Float64Array.from([...c, ...Array.from(c).reverse().map((v) => full - v)]) : c;
  return { x: unfold(mesh.x, space.mirrorX, space.widthUm), y: unfold(mesh.y, space.mirrorY, space.lengthUm) };
}
