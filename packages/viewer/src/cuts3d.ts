import { zeroContours, type Polyline, type RectangleReport } from '@edgewise/solver2d';

/**
 * Sections through a 3D run (`mask.rectangles`), as the same data a 2D cross-section is: a
 * straight cut through the plan view gives a field on (s, z), s the distance along the cut;
 * the surface gives a field on (x, y). The tiles then draw them as they draw any
 * cross-section. Pure functions of plain arrays (unit-tested in Node).
 *
 * The 3D field is [layers, nz, ny, nx] in C order (x contiguous) over the full plan view; x
 * and y are cell centres, z nodes, µm. The side walls are zero-flux faces, so between a wall
 * and the first cell centre the field takes that cell's value (as the 2D tiles do).
 */

export interface Volume {
  x: Float64Array;
  y: Float64Array;
  z: Float64Array;
  /** [layers, nz, ny, nx], C order */
  field: Float64Array;
  layers: number;
  widthUm: number;
  lengthUm: number;
}

export type CornerName = keyof RectangleReport['cornerReachUm'];
/** In the report's order. */
export const CORNER_NAMES: readonly CornerName[] = ['bottomLeft', 'bottomRight', 'topLeft', 'topRight'];

/** A straight cut through the plan view, from wall to wall. */
export type Cut =
  | { kind: 'x'; yUm: number }
  | { kind: 'y'; xUm: number }
  /** through a corner at (xUm, yUm), along the diagonal whose outward direction is (dx, dy)/√2 */
  | { kind: 'diagonal'; xUm: number; yUm: number; dx: 1 | -1; dy: 1 | -1; rectangle: number; corner: CornerName };

/** The line of a cut: (x, y) = origin + s·(ux, uy) for s in [0, lengthUm]. */
export interface CutLine {
  x0Um: number;
  y0Um: number;
  ux: number;
  uy: number;
  lengthUm: number;
}

export function cutLine(cut: Cut, widthUm: number, lengthUm: number): CutLine {
  if (cut.kind === 'x') return { x0Um: 0, y0Um: cut.yUm, ux: 1, uy: 0, lengthUm: widthUm };
  if (cut.kind === 'y') return { x0Um: cut.xUm, y0Um: 0, ux: 0, uy: 1, lengthUm: lengthUm };
  // s grows with x; the line is the one through the corner along its outward diagonal.
  const r = Math.SQRT1_2;
  const sigma = cut.dx * cut.dy;
  const lows = [-cut.xUm / r, sigma > 0 ? -cut.yUm / r : -(lengthUm - cut.yUm) / r];
  const highs = [(widthUm - cut.xUm) / r, sigma > 0 ? (lengthUm - cut.yUm) / r : cut.yUm / r];
  const t0 = Math.max(...lows);
  const t1 = Math.min(...highs);
  return { x0Um: cut.xUm + t0 * r, y0Um: cut.yUm + sigma * t0 * r, ux: r, uy: sigma * r, lengthUm: Math.max(0, t1 - t0) };
}

/** Distance along a cut's line of a point on it, µm. */
export function distanceAlong(line: CutLine, xUm: number, yUm: number): number {
  return (xUm - line.x0Um) * line.ux + (yUm - line.y0Um) * line.uy;
}

/**
 * Where the samples of a cut go: where it crosses a line of cell centres (in x or in y), so
 * that every sample lies on a mesh line and the graded mesh's fine spacing near the mask
 * edges is kept. Strictly inside (0, length): the tile adds the walls.
 */
export function cutPositions(line: CutLine, x: Float64Array, y: Float64Array): Float64Array {
  const s: number[] = [];
  const add = (coords: Float64Array, origin: number, u: number) => {
    if (Math.abs(u) < 1e-12) return;
    for (const c of coords) {
      const t = (c - origin) / u;
      if (t > 0 && t < line.lengthUm) s.push(t);
    }
  };
  add(x, line.x0Um, line.ux);
  add(y, line.y0Um, line.uy);
  s.sort((a, b) => a - b);
  const out: number[] = [];
  const tiny = 1e-9 * Math.max(1, line.lengthUm);
  for (const v of s) if (out.length === 0 || v - out[out.length - 1] > tiny) out.push(v);
  return Float64Array.from(out);
}

/** Index i and weight t of v between coords[i] and coords[i + 1], clamped to the first and last. */
function weight(coords: Float64Array, v: number): [number, number] {
  const n = coords.length;
  if (n === 1 || v <= coords[0]) return [0, 0];
  if (v >= coords[n - 1]) return [n - 2, 1];
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (coords[mid] <= v) lo = mid;
    else hi = mid;
  }
  return [lo, (v - coords[lo]) / (coords[lo + 1] - coords[lo])];
}

/** A 2D section: a field on (s, z) with s strictly increasing, µm. */
export interface Section2d {
  /** positions along the section, µm (cell-centre-like: the walls at 0 and lengthUm are not among them) */
  s: Float64Array;
  z: Float64Array;
  /** [layers, nz, ns], C order */
  field: Float64Array;
  lengthUm: number;
}

/**
 * The field on a cut: bilinear in (x, y) between the four cell centres around each sample
 * (linear along the mesh line it lies on), every layer and depth.
 */
export function sampleCut(volume: Volume, cut: Cut): Section2d & { line: CutLine } {
  const { x, y, z, field, layers } = volume;
  const nx = x.length;
  const ny = y.length;
  const nz = z.length;
  const line = cutLine(cut, volume.widthUm, volume.lengthUm);
  const s = cutPositions(line, x, y);
  const ns = s.length;
  const out = new Float64Array(layers * nz * ns);
  for (let k = 0; k < ns; k++) {
    const [i, tx] = weight(x, line.x0Um + s[k] * line.ux);
    const [j, ty] = weight(y, line.y0Um + s[k] * line.uy);
    const i1 = Math.min(i + 1, nx - 1);
    const j1 = Math.min(j + 1, ny - 1);
    const w00 = (1 - tx) * (1 - ty), w10 = tx * (1 - ty), w01 = (1 - tx) * ty, w11 = tx * ty;
    for (let p = 0; p < layers * nz; p++) {
      const base = p * ny * nx;
      out[p * ns + k] = w00 * field[base + j * nx + i] + w10 * field[base + j * nx + i1]
        + w01 * field[base + j1 * nx + i] + w11 * field[base + j1 * nx + i1];
    }
  }
  return { s, z, field: out, lengthUm: line.lengthUm, line };
}

/**
 * The surface (the z = 0 nodes) as a section whose "depth" runs down the plan view from its
 * top: row r is at depth lengthUm − y, so y points up the screen as on a drawing. The rows
 * include the walls y = lengthUm (depth 0) and y = 0 (depth lengthUm), which take the
 * nearest cell's value; across, s is x.
 */
export function planSection(volume: Volume): Section2d {
  const { x, y, field, layers } = volume;
  const nx = x.length;
  const ny = y.length;
  const nz = volume.z.length;
  const rows = ny + 2;
  const z = new Float64Array(rows);
  z[0] = 0;
  for (let r = 1; r <= ny; r++) z[r] = volume.lengthUm - y[ny - r];
  z[rows - 1] = volume.lengthUm;
  const out = new Float64Array(layers * rows * nx);
  for (let l = 0; l < layers; l++) {
    for (let r = 0; r < rows; r++) {
      const j = Math.min(ny - 1, Math.max(0, ny - r));
      const src = l * nz * ny * nx + j * nx;
      out.set(field.subarray(src, src + nx), (l * rows + r) * nx);
    }
  }
  return { s: x, z, field: out, lengthUm: volume.widthUm };
}

/** Junction contours of a section's first layer (net doping), with the walls added as in the 2D report. */
export function sectionContours(section: Section2d): Polyline[] {
  const ns = section.s.length;
  const nz = section.z.length;
  const nx = ns + 2;
  const xs = new Float64Array(nx);
  xs.set(section.s, 1);
  xs[nx - 1] = section.lengthUm;
  const values = new Float64Array(nx * nz);
  for (let j = 0; j < nz; j++) {
    const src = section.field.subarray(j * ns, (j + 1) * ns);
    values.set(src, j * nx + 1);
    values[j * nx] = src[0];
    values[j * nx + nx - 1] = src[ns - 1];
  }
  return zeroContours({ xs, zs: section.z, values, nx, nz });
}

export type Rectangle = readonly [number, number, number, number];

export function rectanglesOf(report: { rectangles?: RectangleReport[] }): Rectangle[] {
  return (report.rectangles ?? []).map((r) => [r.x0Um, r.y0Um, r.x1Um, r.y1Um] as const);
}

/**
 * The stretches of a cut that lie in a window (the union of the rectangles), [s0, s1] µm,
 * ordered, touching or overlapping stretches joined.
 */
export function windowsAlong(line: CutLine, rectangles: readonly Rectangle[]): [number, number][] {
  const spans: [number, number][] = [];
  const tiny = 1e-9 * Math.max(1, line.lengthUm);
  for (const [x0, y0, x1, y1] of rectangles) {
    let lo = 0;
    let hi = line.lengthUm;
    for (const [origin, u, a, b] of [[line.x0Um, line.ux, x0, x1], [line.y0Um, line.uy, y0, y1]]) {
      if (Math.abs(u) < 1e-12) {
        if (origin < a - tiny || origin > b + tiny) hi = -1;
        continue;
      }
      const ta = (a - origin) / u;
      const tb = (b - origin) / u;
      lo = Math.max(lo, Math.min(ta, tb));
      hi = Math.min(hi, Math.max(ta, tb));
    }
    if (hi > lo + tiny) spans.push([lo, hi]);
  }
  spans.sort((p, q) => p[0] - q[0]);
  const out: [number, number][] = [];
  for (const sp of spans) {
    const last = out[out.length - 1];
    if (last && sp[0] <= last[1] + tiny) last[1] = Math.max(last[1], sp[1]);
    else out.push([sp[0], sp[1]]);
  }
  return out;
}

function inWindow(rectangles: readonly Rectangle[], x: number, y: number): boolean {
  return rectangles.some(([x0, y0, x1, y1]) => x > x0 && x < x1 && y > y0 && y < y1);
}

export const CORNER_POINTS: Record<CornerName, (r: Rectangle) => [number, number]> = {
  bottomLeft: (r) => [r[0], r[1]], bottomRight: (r) => [r[2], r[1]], topLeft: (r) => [r[0], r[3]], topRight: (r) => [r[2], r[3]],
};

/**
 * The outward diagonal of a corner of the window's outline, as the report measures the reach
 * along it: away from the one filled quadrant at a convex corner, into the one empty
 * quadrant at a concave corner; null where the point is not a corner of the outline.
 */
export function cornerDiagonal(rectangles: readonly Rectangle[], xUm: number, yUm: number, scaleUm: number): { dx: 1 | -1; dy: 1 | -1; kind: 'convex' | 'concave' } | null {
  const eps = 1e-6 * scaleUm;
  const quadrants: [1 | -1, 1 | -1][] = [[1, 1], [-1, 1], [-1, -1], [1, -1]];
  const filled = quadrants.filter(([sx, sy]) => inWindow(rectangles, xUm + eps * sx, yUm + eps * sy));
  if (filled.length === 1) return { dx: -filled[0][0] as 1 | -1, dy: -filled[0][1] as 1 | -1, kind: 'convex' };
  if (filled.length === 3) {
    const [ex, ey] = quadrants.find(([sx, sy]) => !inWindow(rectangles, xUm + eps * sx, yUm + eps * sy))!;
    return { dx: ex, dy: ey, kind: 'concave' };
  }
  return null;
}

/** A corner of a rectangle as a diagonal cut, or null where it is not a corner of the outline. */
export function cornerCut(report: { rectangles?: RectangleReport[]; crossSection: { widthUm: number; lengthUm?: number } }, rectangle: number, corner: CornerName): Cut | null {
  const rects = rectanglesOf(report);
  const r = rects[rectangle];
  if (!r) return null;
  const [xUm, yUm] = CORNER_POINTS[corner](r);
  const d = cornerDiagonal(rects, xUm, yUm, Math.max(report.crossSection.widthUm, report.crossSection.lengthUm ?? 0));
  return d ? { kind: 'diagonal', xUm, yUm, dx: d.dx, dy: d.dy, rectangle, corner } : null;
}

/** Every corner of the outline, rectangle by rectangle, convex ones first. */
export function outlineCorners(report: Parameters<typeof cornerCut>[0]): { rectangle: number; corner: CornerName; kind: 'convex' | 'concave' }[] {
  const out: { rectangle: number; corner: CornerName; kind: 'convex' | 'concave' }[] = [];
  (report.rectangles ?? []).forEach((r, k) => {
    for (const corner of CORNER_NAMES) {
      const kind = r.cornerKind?.[corner];
      if (kind && cornerCut(report, k, corner)) out.push({ rectangle: k, corner, kind });
    }
  });
  return [...out.filter((c) => c.kind === 'convex'), ...out.filter((c) => c.kind === 'concave')];
}

/** The default cuts: along x and along y through the first rectangle's middle, and the diagonal through the first convex corner. */
export function defaultCuts(report: Parameters<typeof cornerCut>[0]): Cut[] {
  const r = report.rectangles?.[0];
  if (!r) return [];
  const cuts: Cut[] = [{ kind: 'x', yUm: 0.5 * (r.y0Um + r.y1Um) }, { kind: 'y', xUm: 0.5 * (r.x0Um + r.x1Um) }];
  const first = outlineCorners(report)[0];
  const diagonal = first ? cornerCut(report, first.rectangle, first.corner) : null;
  if (diagonal) cuts.push(diagonal);
  return cuts;
}

const CORNER_WORDS: Record<CornerName, string> = { bottomLeft: 'bottom-left', bottomRight: 'bottom-right', topLeft: 'top-left', topRight: 'top-right' };

export function cornerWords(corner: CornerName): string {
  return CORNER_WORDS[corner];
}

/** What a cut is, in words: "cut along x at y = 1.50 µm". */
export function cutTitle(cut: Cut): string {
  if (cut.kind === 'x') return `cut along x at y = ${cut.yUm.toFixed(2)} µm`;
  if (cut.kind === 'y') return `cut along y at x = ${cut.xUm.toFixed(2)} µm`;
  return `cut along the diagonal through the ${CORNER_WORDS[cut.corner]} corner of rectangle ${cut.rectangle + 1} (${cut.xUm.toFixed(2)}, ${cut.yUm.toFixed(2)}) µm`;
}

/** The horizontal axis of a cut's tile, with its unit. */
export function cutAxisName(cut: Cut): string {
  if (cut.kind === 'x') return 'x, µm';
  if (cut.kind === 'y') return 'y, µm';
  return 'distance along the diagonal, µm';
}

/** A reach measured in the plan view: from a point on the outline along a unit direction. */
export interface ReachMark {
  rectangle: number;
  kind: 'edge' | 'corner';
  /** edge or corner name (left … top, bottomLeft … topRight) */
  name: string;
  xUm: number;
  yUm: number;
  ux: number;
  uy: number;
  reachUm: number;
  errorUm: number | null;
}

/** The report's reaches as marks: at each straight edge's middle along its normal, at each corner along its outward diagonal. */
export function reachMarks(report: Parameters<typeof cornerCut>[0]): ReachMark[] {
  const rects = rectanglesOf(report);
  const out: ReachMark[] = [];
  (report.rectangles ?? []).forEach((r, k) => {
    const xm = 0.5 * (r.x0Um + r.x1Um);
    const ym = 0.5 * (r.y0Um + r.y1Um);
    const edges: [keyof RectangleReport['edgeReachUm'], number, number, number, number][] = [
      ['left', r.x0Um, ym, -1, 0], ['right', r.x1Um, ym, 1, 0], ['bottom', xm, r.y0Um, 0, -1], ['top', xm, r.y1Um, 0, 1],
    ];
    for (const [name, x, y, ux, uy] of edges) {
      const reach = r.edgeReachUm[name];
      if (typeof reach === 'number') out.push({ rectangle: k, kind: 'edge', name, xUm: x, yUm: y, ux, uy, reachUm: reach, errorUm: r.errors?.edgeReachUm[name] ?? null });
    }
    for (const name of CORNER_NAMES) {
      const reach = r.cornerReachUm[name];
      const [x, y] = CORNER_POINTS[name](rects[k]);
      const d = cornerDiagonal(rects, x, y, Math.max(report.crossSection.widthUm, report.crossSection.lengthUm ?? 0));
      if (typeof reach !== 'number' || !d) continue;
      out.push({ rectangle: k, kind: 'corner', name, xUm: x, yUm: y, ux: d.dx * Math.SQRT1_2, uy: d.dy * Math.SQRT1_2, reachUm: reach, errorUm: r.errors?.cornerReachUm[name] ?? null });
    }
  });
  return out;
}

/** What a tile made from a 3D run shows: its kind, its words, its axes and where it lies in the plan view. */
export interface SectionInfo {
  kind: 'plan' | Cut['kind'];
  /** "plan view at the surface", "cut along x at y = 1.50 µm" */
  title: string;
  /** the report's numbers this section shows, a caption line each */
  lines: string[];
  /** the axes' names with their units: across the tile and down it */
  across: string;
  down: string;
  /** the plan view: the tile's depth is this minus y (y points up the screen); null for a cut */
  downFromUm: number | null;
  /** a cut's line in the plan view; null for the plan view */
  line: CutLine | null;
  /** the plan view: the mask's rectangles and the report's reaches, µm */
  rectangles: Rectangle[];
  marks: ReachMark[];
}

/** A point of a section's tile (across, down in µm) as named coordinates of the 3D run. */
export function sectionPlace(info: SectionInfo, acrossUm: number, downUm: number): [string, number][] {
  if (info.downFromUm !== null) return [['x', acrossUm], ['y', info.downFromUm - downUm]];
  const line = info.line!;
  const place: [string, number][] = [['x', line.x0Um + acrossUm * line.ux], ['y', line.y0Um + acrossUm * line.uy], ['z', downUm]];
  return info.kind === 'diagonal' ? [['s', acrossUm], ...place] : place;
}
