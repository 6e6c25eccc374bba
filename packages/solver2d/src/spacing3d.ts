import type { Report } from './analyze.ts';
import type { Polyline } from './junction.ts';
import type { Rectangle } from './mesh3d.ts';
import type { Recipe } from './recipe.ts';
import { RecipeError } from './recipe-terms.ts';
import { closestApproach, type PairSpacing } from './spacing.ts';

/**
 * Spacing between two rectangles of a 3D recipe (the first two of mask.rectangles): the
 * masked distance between them — corner to corner where they face each other diagonally,
 * corner (or edge) to edge where they overlap in x or in y — and the gap between their
 * junctions' outlines at the surface. The stripe search (stripe-search.ts) moves the second
 * rectangle along the line of that distance, keeping the margins to the walls.
 */

/** The masked distance from a to b: its x and y parts (0 where they overlap along that axis), signed towards b. */
function facing(a: Rectangle, b: Rectangle): { dx: number; dy: number; distance: number } {
  const dx = b[0] >= a[2] ? b[0] - a[2] : a[0] >= b[2] ? -(a[0] - b[2]) : 0;
  const dy = b[1] >= a[3] ? b[1] - a[3] : a[1] >= b[3] ? -(a[1] - b[3]) : 0;
  return { dx, dy, distance: Math.hypot(dx, dy) };
}

/** The first two rectangles, which must be apart (touching ones are one window). */
function pair(recipe: Recipe): [Rectangle, Rectangle] {
  const rs = recipe.mask.rectangles ?? [];
  if (rs.length < 2) throw new RecipeError('mask.rectangles', 'must list two rectangles for a spacing search (the first two are used)');
  const a = rs[0] as Rectangle;
  const b = rs[1] as Rectangle;
  if (!(facing(a, b).distance > 0)) throw new RecipeError('mask.rectangles[1]', 'touches mask.rectangles[0]: a spacing search needs two rectangles apart');
  return [a, b];
}

/** The masked distance between the pair's rectangles, µm. */
export function pairDistance3d(recipe: Recipe): number {
  const [a, b] = pair(recipe);
  return facing(a, b).distance;
}

/** The recipe with its first two rectangles `distanceUm` apart along their facing line, the walls' margins kept. */
export function pairRecipe3d(recipe: Recipe, distanceUm: number): Recipe {
  const [a, b] = pair(recipe);
  const f = facing(a, b);
  const shift = distanceUm - f.distance;
  const mx = (f.dx / f.distance) * shift;
  const my = (f.dy / f.distance) * shift;
  const moved: Rectangle = [b[0] + mx, b[1] + my, b[2] + mx, b[3] + my];
  const W = recipe.crossSection.widthUm;
  const L = recipe.crossSection.lengthUm ?? W;
  const margins = { left: Math.min(a[0], b[0]), bottom: Math.min(a[1], b[1]), right: W - Math.max(a[2], b[2]), top: L - Math.max(a[3], b[3]) };
  const ox = margins.left - Math.min(a[0], moved[0]);
  const oy = margins.bottom - Math.min(a[1], moved[1]);
  const place = (r: Rectangle): [number, number, number, number] => [r[0] + ox, r[1] + oy, r[2] + ox, r[3] + oy];
  const ra = place(a);
  const rb = place(moved);
  return {
    ...recipe,
    crossSection: { ...recipe.crossSection, widthUm: Math.max(ra[2], rb[2]) + margins.right, lengthUm: Math.max(ra[3], rb[3]) + margins.top },
    mask: { rectangles: [ra, rb] },
  };
}

/** Whether (x, y) lies inside the closed polygon `line` (even-odd rule). */
function encloses(line: Polyline, x: number, y: number): boolean {
  let inside = false;
  for (let k = 0, m = line.length - 1; k < line.length; m = k++) {
    const [xk, yk] = line[k];
    const [xm, ym] = line[m];
    if ((yk > y) !== (ym > y) && x < ((xm - xk) * (y - yk)) / (ym - yk) + xk) inside = !inside;
  }
  return inside;
}

/**
 * The pair's spacing from a 3D report: the outline around each rectangle's centre (the
 * innermost that encloses it), merged when one outline encloses both, else the closest
 * approach of the two outlines at the surface.
 */
export function pairSpacing3d(report: Report, distanceUm: number): PairSpacing {
  const [a, b] = report.rectangles!;
  const lines = (report.plan?.outlines ?? []).map((o) => o.polylinesUm[0]);
  const around = (r: typeof a) => lines.filter((l) => encloses(l, 0.5 * (r.x0Um + r.x1Um), 0.5 * (r.y0Um + r.y1Um)));
  const la = around(a);
  const lb = around(b);
  const shared = la.some((l) => lb.includes(l));
  if (shared || la.length === 0 || lb.length === 0) {
    return { left: 0, right: 1, stripeUm: distanceUm, surfaceGapUm: shared ? 0 : null, minimumGapUm: shared ? 0 : null, minimumGapDepthUm: shared ? 0 : null, merged: shared };
  }
  const gap = Number(closestApproach(la[0], lb[0]).distance.toPrecision(6));
  return { left: 0, right: 1, stripeUm: distanceUm, surfaceGapUm: gap, minimumGapUm: gap, minimumGapDepthUm: 0, merged: false };
}
