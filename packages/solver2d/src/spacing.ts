import type { ErrorBars, SpacingErrorKey } from './error-bars.ts';
import { surfaceCrossing, type NodeGrid, type Point, type Polyline } from './junction.ts';
import type { Window } from './mask.ts';
import type { Mesh } from './mesh.ts';
import { reachesBottom, surfaceRegionAt, type Regions } from './region.ts';

/**
 * Spacing between the junctions of two neighbouring windows across the masked stripe
 * between them: the gap at the surface, the closest approach of the two junctions anywhere
 * below it, and whether the two diffused regions have merged into one.
 */
export interface PairSpacing {
  /** indices into the recipe's window list, left then right */
  left: number;
  right: number;
  /** masked stripe between the windows, µm */
  stripeUm: number;
  /** right surface junction of the left window to left surface junction of the right one, µm; 0 once merged at the surface */
  surfaceGapUm: number | null;
  /** closest approach of the two junctions, µm; 0 once merged */
  minimumGapUm: number | null;
  /** depth of the midpoint of that closest approach, µm */
  minimumGapDepthUm: number | null;
  merged: boolean;
  /** numerical error of the gaps, µm */
  errors?: ErrorBars<SpacingErrorKey>;
}

/** Squared distance from p to the segment ab. */
function pointSegment2(p: Point, a: Point, b: Point): number {
  const ux = b[0] - a[0], uz = b[1] - a[1];
  const len2 = ux * ux + uz * uz;
  const t = len2 > 0 ? Math.min(1, Math.max(0, ((p[0] - a[0]) * ux + (p[1] - a[1]) * uz) / len2)) : 0;
  const dx = a[0] + t * ux - p[0], dz = a[1] + t * uz - p[1];
  return dx * dx + dz * dz;
}

/** Closest approach of two polylines that do not cross, and the midpoint of it. */
export function closestApproach(a: Polyline, b: Polyline): { distance: number; midpoint: Point } {
  let best = Infinity;
  let mid: Point = [NaN, NaN];
  const scan = (points: Polyline, segments: Polyline) => {
    for (const p of points) {
      for (let k = 0; k + 1 < segments.length; k++) {
        const d2 = pointSegment2(p, segments[k], segments[k + 1]);
        if (d2 < best) {
          best = d2;
          const s0 = segments[k], s1 = segments[k + 1];
          const ux = s1[0] - s0[0], uz = s1[1] - s0[1];
          const len2 = ux * ux + uz * uz;
          const t = len2 > 0 ? Math.min(1, Math.max(0, ((p[0] - s0[0]) * ux + (p[1] - s0[1]) * uz) / len2)) : 0;
          mid = [0.5 * (p[0] + s0[0] + t * ux), 0.5 * (p[1] + s0[1] + t * uz)];
        }
      }
    }
  };
  scan(a, b);
  scan(b, a);
  return { distance: Math.sqrt(best), midpoint: mid };
}

/** The contour that ends on the surface nearest to x (the junction of that window's edge). */
export function contourEndingAt(contours: readonly Polyline[], x: number): Polyline | null {
  let best: Polyline | null = null;
  let bestD = Infinity;
  for (const line of contours) {
    for (const end of [line[0], line[line.length - 1]]) {
      if (end[1] !== 0) continue;
      const d = Math.abs(end[0] - x);
      if (d < bestD) {
        bestD = d;
        best = line;
      }
    }
  }
  return best;
}

/** A pair with no gap to give (no layer at a centre, or none apart from the other). */
export function noSpacing(windows: readonly Window[], left: number, right: number): PairSpacing {
  return { left, right, stripeUm: windows[right][0] - windows[left][1], surfaceGapUm: null, minimumGapUm: null, minimumGapDepthUm: null, merged: false };
}

/**
 * Spacing of one pair. `grid` is the wall-padded junction indicator (positive inside the
 * diffused regions), `contours` its zero contours, `regions` the labelled regions of the
 * type at the surface of both window centres. Where that is the substrate's type
 * (`substrateType`: source/drain regions in a well), two layers joined only through the
 * substrate below are not merged with each other.
 */
export function pairSpacing(grid: NodeGrid, contours: readonly Polyline[], mesh: Mesh, regions: Regions,
                            windows: readonly Window[], left: number, right: number, substrateType = false): PairSpacing {
  const [, x1] = windows[left];
  const [x0] = windows[right];
  const base = { left, right, stripeUm: x0 - x1 };
  const cl = 0.5 * (windows[left][0] + windows[left][1]);
  const cr = 0.5 * (windows[right][0] + windows[right][1]);
  const labelL = surfaceRegionAt(regions, mesh, cl);
  const labelR = surfaceRegionAt(regions, mesh, cr);
  if (labelL === 0 || labelR === 0) return noSpacing(windows, left, right);
  const xa = surfaceCrossing(grid, cl, 1);
  const xb = surfaceCrossing(grid, cr, -1);
  const surfaceApart = xa !== null && xb !== null && xa < cr && xb > cl && xb > xa;
  const surfaceGap = surfaceApart ? xb - xa : 0;
  const viaSubstrate = substrateType && reachesBottom(regions, labelL, mesh.nx, mesh.nz);
  if (labelL === labelR && !viaSubstrate) return { ...base, surfaceGapUm: surfaceGap, minimumGapUm: 0, minimumGapDepthUm: null, merged: true };
  if (xa === null || xb === null) return noSpacing(windows, left, right);
  const a = contourEndingAt(contours, xa);
  const b = contourEndingAt(contours, xb);
  if (!a || !b || a === b) return { ...base, surfaceGapUm: surfaceGap, minimumGapUm: null, minimumGapDepthUm: null, merged: false };
  const { distance, midpoint } = closestApproach(a, b);
  return { ...base, surfaceGapUm: surfaceGap, minimumGapUm: distance, minimumGapDepthUm: midpoint[1], merged: false };
}
