import { describe, expect, it } from 'vitest';
import {
  cornerCut, cornerDiagonal, cutLine, defaultCuts, planSection, reachMarks, sampleCut, sectionContours, windowsAlong,
  type Cut, type Rectangle, type Volume,
} from '../../packages/viewer/src/cuts3d.ts';

/*
 * Cuts through a synthetic 3D field whose junction is known in closed form. The field is
 * separable, N(x, y, z) = C·exp(−((x−a)/α)²)·exp(−((y−b)/β)²)·exp(−(z/γ)²), against a
 * background NB of the other type: net doping N − NB changes sign on the ellipsoid
 * ((x−a)/α)² + ((y−b)/β)² + (z/γ)² = Λ, Λ = ln(C/NB) (closed form, derived here).
 */
const C = 1e20;
const NB = 1e16;
const LAMBDA = Math.log(C / NB);
const A = 4.3;
const B = 3.7;
const ALPHA = 1.1;
const BETA = 0.8;
const GAMMA = 0.5;
const W = 8;
const L = 7;

/** Cell centres of a mesh graded towards `fine` (spacing h there, up to 4h far away). */
function centres(width: number, fine: number, h: number): Float64Array {
  const faces = [0];
  while (faces[faces.length - 1] < width) {
    const f = faces[faces.length - 1];
    faces.push(Math.min(width, f + h * Math.min(4, 1 + Math.abs(f - fine))));
  }
  return Float64Array.from(faces.slice(1), (f, k) => 0.5 * (f + faces[k]));
}

function gaussianVolume(h: number): Volume {
  const x = centres(W, A, h);
  const y = centres(L, B, h);
  const z = Float64Array.from({ length: Math.round(2.5 / h) + 1 }, (_, k) => k * h);
  const nx = x.length, ny = y.length, nz = z.length;
  const field = new Float64Array(2 * nz * ny * nx);
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        const n = C * Math.exp(-(((x[i] - A) / ALPHA) ** 2) - ((y[j] - B) / BETA) ** 2 - (z[k] / GAMMA) ** 2);
        field[(k * ny + j) * nx + i] = n - NB;
        field[((nz + k) * ny + j) * nx + i] = n;
      }
    }
  }
  return { x, y, z, field, layers: 2, widthUm: W, lengthUm: L };
}

/** Smallest and largest s where the junction meets the surface (z = 0), from a section's contours. */
function surfaceCrossings(lines: [number, number][][]): [number, number] {
  const s = lines.flat().filter(([, z]) => Math.abs(z) < 1e-12).map(([p]) => p);
  return [Math.min(...s), Math.max(...s)];
}

/** Deepest point of the contours, µm. */
function deepest(lines: [number, number][][]): number {
  return Math.max(...lines.flat().map(([, z]) => z));
}

describe('cuts through a 3D field', () => {
  it('reproduce a field bilinear in x and y exactly, on every kind of cut (bilinear interpolation is exact for it)', () => {
    const x = centres(W, 2, 0.3);
    const y = centres(L, 5, 0.25);
    const z = Float64Array.from([0, 0.5, 1.5]);
    const f = (xx: number, yy: number, zz: number, l: number) => 1 + 2 * xx - 3 * yy + 0.5 * xx * yy + 7 * zz + 100 * l;
    const field = new Float64Array(2 * 3 * y.length * x.length);
    for (let l = 0; l < 2; l++) for (let k = 0; k < 3; k++) for (let j = 0; j < y.length; j++) for (let i = 0; i < x.length; i++) {
      field[((l * 3 + k) * y.length + j) * x.length + i] = f(x[i], y[j], z[k], l);
    }
    const volume = { x, y, z, field, layers: 2, widthUm: W, lengthUm: L };
    const cuts: Cut[] = [
      { kind: 'x', yUm: 2.345 }, { kind: 'y', xUm: 5.55 },
      { kind: 'diagonal', xUm: 3, yUm: 2, dx: -1, dy: -1, rectangle: 0, corner: 'bottomLeft' },
      { kind: 'diagonal', xUm: 3, yUm: 2, dx: 1, dy: -1, rectangle: 0, corner: 'bottomRight' },
    ];
    for (const cut of cuts) {
      const c = sampleCut(volume, cut);
      const ns = c.s.length;
      let checked = 0;
      for (let k = 0; k < ns; k++) {
        const px = c.line.x0Um + c.s[k] * c.line.ux;
        const py = c.line.y0Um + c.s[k] * c.line.uy;
        // Inside the hull of the cell centres (beyond it the walls hold the value constant).
        if (px < x[0] || px > x[x.length - 1] || py < y[0] || py > y[y.length - 1]) continue;
        for (let l = 0; l < 2; l++) for (let j = 0; j < 3; j++) {
          expect(c.field[(l * 3 + j) * ns + k]).toBeCloseTo(f(px, py, z[j], l), 10);
          checked++;
        }
      }
      expect(checked).toBeGreaterThan(6 * 10);
    }
  });

  it('puts the diagonal through the corner, from wall to wall, s growing with x', () => {
    const line = cutLine({ kind: 'diagonal', xUm: 3, yUm: 2, dx: -1, dy: -1, rectangle: 0, corner: 'bottomLeft' }, W, L);
    // Through (3, 2) along (1, 1)/√2: enters at y = 0 (x = 1), leaves at y = L (x = 6).
    expect(line.x0Um).toBeCloseTo(1, 12);
    expect(line.y0Um).toBeCloseTo(0, 12);
    expect(line.lengthUm).toBeCloseTo(Math.SQRT2 * 7, 12);
    const anti = cutLine({ kind: 'diagonal', xUm: 3, yUm: 2, dx: 1, dy: -1, rectangle: 0, corner: 'bottomRight' }, W, L);
    // Along (1, −1)/√2: enters at x = 0 (y = 5), leaves at y = 0 (x = 5).
    expect([anti.x0Um, anti.y0Um, anti.lengthUm / Math.SQRT2]).toEqual([expect.closeTo(0, 12), expect.closeTo(5, 12), expect.closeTo(5, 12)]);
  });

  for (const h of [0.05, 0.025]) {
    it(`finds the closed-form junction on cuts along x, y and the diagonal (mesh ${h} µm near the peak)`, () => {
      const volume = gaussianVolume(h);
      // Linear interpolation between samples errs by O(h²), h the spacing where the junction
      // crosses (up to 4h there): measured up to 0.024 µm at h = 0.05 and 0.005 µm at 0.025.
      const tol = 12 * h * h;
      // Along x at y0: ((x−a)/α)² = Λ − ((y0−b)/β)² at the surface; depth at x = a is γ·√(that).
      const y0 = 3.2;
      const rx = ALPHA * Math.sqrt(LAMBDA - ((y0 - B) / BETA) ** 2);
      const cx = sectionContours(sampleCut(volume, { kind: 'x', yUm: y0 }));
      const [lo, hi] = surfaceCrossings(cx);
      expect(Math.abs(lo - (A - rx))).toBeLessThan(tol);
      expect(Math.abs(hi - (A + rx))).toBeLessThan(tol);
      expect(Math.abs(deepest(cx) - GAMMA * Math.sqrt(LAMBDA - ((y0 - B) / BETA) ** 2))).toBeLessThan(tol);
      // Along y at x0, likewise.
      const x0 = 5;
      const ry = BETA * Math.sqrt(LAMBDA - ((x0 - A) / ALPHA) ** 2);
      const [ylo, yhi] = surfaceCrossings(sectionContours(sampleCut(volume, { kind: 'y', xUm: x0 })));
      expect(Math.abs(ylo - (B - ry))).toBeLessThan(tol);
      expect(Math.abs(yhi - (B + ry))).toBeLessThan(tol);
      // The diagonal through (3, 2) along (1, 1)/√2, s from the line's entry (1, 0):
      // x = 1 + s/√2, y = s/√2, so ((x−a)/α)² + ((y−b)/β)² = Λ is q2·s² + q1·s + q0 = 0.
      const r = Math.SQRT1_2;
      const q2 = r * r * (1 / ALPHA ** 2 + 1 / BETA ** 2);
      const q1 = 2 * r * ((1 - A) / ALPHA ** 2 + (0 - B) / BETA ** 2);
      const q0 = ((1 - A) / ALPHA) ** 2 + (B / BETA) ** 2 - LAMBDA;
      const root = Math.sqrt(q1 * q1 - 4 * q2 * q0);
      const diagonal = sampleCut(volume, { kind: 'diagonal', xUm: 3, yUm: 2, dx: -1, dy: -1, rectangle: 0, corner: 'bottomLeft' });
      const [dlo, dhi] = surfaceCrossings(sectionContours(diagonal));
      expect(Math.abs(dlo - (-q1 - root) / (2 * q2))).toBeLessThan(tol);
      expect(Math.abs(dhi - (-q1 + root) / (2 * q2))).toBeLessThan(tol);
    });
  }

  it('gives the surface as a plan section with y pointing up the screen (depth = length − y)', () => {
    const volume = gaussianVolume(0.05);
    const plan = planSection(volume);
    const ny = volume.y.length;
    const nx = volume.x.length;
    expect(plan.z.length).toBe(ny + 2);
    expect(plan.z[0]).toBe(0);
    expect(plan.z[ny + 1]).toBe(L);
    for (let r = 1; r < ny + 2; r++) expect(plan.z[r]).toBeGreaterThan(plan.z[r - 1]);
    // Row r (1 ≤ r ≤ ny) holds y = L − z[r], the surface nodes (z = 0) of both layers.
    for (const r of [1, 7, ny]) {
      const j = ny - r;
      expect(L - plan.z[r]).toBeCloseTo(volume.y[j], 12);
      for (const i of [0, 13, nx - 1]) {
        expect(plan.field[r * nx + i]).toBe(volume.field[j * nx + i]);
        expect(plan.field[((ny + 2) + r) * nx + i]).toBe(volume.field[(volume.z.length * ny + j) * nx + i]);
      }
    }
    // The outline of the junction at the surface is the ellipse ((x−a)/α)² + ((y−b)/β)² = Λ.
    const outline = sectionContours(plan).flat();
    expect(outline.length).toBeGreaterThan(40);
    for (const [x, d] of outline) {
      const y = L - d;
      expect(Math.abs(Math.sqrt(((x - A) / ALPHA) ** 2 + ((y - B) / BETA) ** 2) / Math.sqrt(LAMBDA) - 1)).toBeLessThan(0.01);
    }
  });
});

describe('corners and windows of an L-shaped window', () => {
  // An L: a 4 × 2 bar and a 2 × 2 square on its left end (touching rectangles make one window).
  const rects: Rectangle[] = [[2, 2, 6, 4], [2, 4, 4, 6]];
  // Corners of the outline: the bar's top-left (2, 4) and the square's bottom-left lie on the
  // L's straight left side; the square's bottom-right (4, 4) is the inside (concave) corner.
  const kinds = [
    { bottomLeft: 'convex', bottomRight: 'convex', topLeft: null, topRight: 'convex' },
    { bottomLeft: null, bottomRight: 'concave', topLeft: 'convex', topRight: 'convex' },
  ] as const;
  const report = {
    crossSection: { widthUm: 8, lengthUm: 8 },
    rectangles: rects.map(([x0, y0, x1, y1], k) => ({
      x0Um: x0, y0Um: y0, x1Um: x1, y1Um: y1, junctionDepthUm: 1,
      edgeReachUm: { left: k === 0 ? 0.5 : null, right: 0.5, bottom: k === 0 ? 0.5 : null, top: 0.5 },
      cornerReachUm: Object.fromEntries(Object.entries(kinds[k]).map(([c, kind]) => [c, kind === null ? null : kind === 'convex' ? 0.4 : 0.7])),
      cornerKind: kinds[k],
      cornerToEdgeRatio: {},
    })),
  } as unknown as Parameters<typeof reachMarks>[0];

  it('tells convex from concave corners and points the diagonal away from the window (the report\'s rule)', () => {
    expect(cornerDiagonal(rects, 2, 2, 8)).toEqual({ dx: -1, dy: -1, kind: 'convex' });
    expect(cornerDiagonal(rects, 6, 4, 8)).toEqual({ dx: 1, dy: 1, kind: 'convex' });
    // (4, 4): the square's bottom-right, the inside corner of the L.
    expect(cornerDiagonal(rects, 4, 4, 8)).toEqual({ dx: 1, dy: 1, kind: 'concave' });
    // (2, 4) lies on the L's straight left side: no corner.
    expect(cornerDiagonal(rects, 2, 4, 8)).toBeNull();
    expect(cornerCut(report, 0, 'topLeft')).toBeNull();
  });

  it('joins the touching rectangles into one stretch along a cut', () => {
    expect(windowsAlong(cutLine({ kind: 'y', xUm: 3 }, 8, 8), rects)).toEqual([[2, 6]]);
    expect(windowsAlong(cutLine({ kind: 'x', yUm: 5 }, 8, 8), rects)).toEqual([[2, 4]]);
    expect(windowsAlong(cutLine({ kind: 'x', yUm: 7 }, 8, 8), rects)).toEqual([]);
    // The diagonal through (4, 4) along (1, 1): from (0, 0); in the window from (2, 2) to (4, 4).
    const d = windowsAlong(cutLine({ kind: 'diagonal', xUm: 4, yUm: 4, dx: 1, dy: 1, rectangle: 1, corner: 'bottomRight' }, 8, 8), rects);
    expect(d).toHaveLength(1);
    expect(d[0][0]).toBeCloseTo(2 * Math.SQRT2, 12);
    expect(d[0][1]).toBeCloseTo(4 * Math.SQRT2, 12);
  });

  it('defaults to x and y through the first rectangle\'s middle and the first convex corner', () => {
    const cuts = defaultCuts(report);
    expect(cuts.slice(0, 2)).toEqual([{ kind: 'x', yUm: 3 }, { kind: 'y', xUm: 4 }]);
    expect(cuts[2]).toMatchObject({ kind: 'diagonal', xUm: 2, yUm: 2, dx: -1, dy: -1, corner: 'bottomLeft', rectangle: 0 });
  });

  it('marks each reach of the report from its edge middle or corner, along the normal or the outward diagonal', () => {
    const marks = reachMarks(report);
    const concave = marks.find((m) => m.kind === 'corner' && m.rectangle === 1 && m.name === 'bottomRight');
    expect(concave).toMatchObject({ xUm: 4, yUm: 4, ux: Math.SQRT1_2, uy: Math.SQRT1_2, reachUm: 0.7 });
    expect(marks.find((m) => m.kind === 'edge' && m.rectangle === 0 && m.name === 'left')).toMatchObject({ xUm: 2, yUm: 3, ux: -1, uy: 0, reachUm: 0.5 });
    // (2, 4) is not a corner of the outline: no mark there.
    expect(marks.some((m) => m.kind === 'corner' && m.xUm === 2 && m.yUm === 4)).toBe(false);
  });
});
