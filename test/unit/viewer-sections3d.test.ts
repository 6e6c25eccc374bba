import { describe, expect, it } from 'vitest';
import type { Report } from '../../packages/solver2d/src/index.ts';
import { sectionPlace } from '../../packages/viewer/src/cuts3d.ts';
import type { RunData } from '../../packages/viewer/src/load.ts';
import { chosenCuts, sectionRuns } from '../../packages/viewer/src/sections3d.ts';

/*
 * A 3D run as the tiles' 2D runs. The field is a made-up cone of acceptors over a donor
 * background, N − NB = 1 − r/R (r from (5, 4) in the plan, plus depth): its junction is the
 * circle r = R at the surface (closed form); the report's reaches are made-up numbers the
 * sections must carry to the right ends of the right stretches.
 */
const W = 10;
const L = 8;
const R = 3;
const x = Float64Array.from({ length: 40 }, (_, i) => (i + 0.5) * (W / 40));
const y = Float64Array.from({ length: 32 }, (_, j) => (j + 0.5) * (L / 32));
const z = Float64Array.from([0, 0.5, 1, 2]);

function run(): RunData {
  const field = new Float64Array(2 * z.length * y.length * x.length);
  for (let k = 0; k < z.length; k++) for (let j = 0; j < y.length; j++) for (let i = 0; i < x.length; i++) {
    const r = Math.hypot(x[i] - 5, y[j] - 4, z[k]);
    field[(k * y.length + j) * x.length + i] = -(1 - r / R);
    field[((z.length + k) * y.length + j) * x.length + i] = 2 - r / R;
  }
  const rect = {
    x0Um: 4, y0Um: 3, x1Um: 6, y1Um: 5, junctionDepthUm: 2.5,
    edgeReachUm: { left: 0.91, right: 0.92, bottom: 0.93, top: 0.94 },
    cornerReachUm: { bottomLeft: 0.51, bottomRight: 0.52, topLeft: 0.53, topRight: 0.54 },
    cornerKind: { bottomLeft: 'convex', bottomRight: 'convex', topLeft: 'convex', topRight: 'convex' },
    cornerToEdgeRatio: { bottomLeft: 0.55, bottomRight: 0.56, topLeft: 0.57, topRight: 0.58 },
  };
  const report = {
    title: 'cone', substrate: { dopant: 'P', type: 'donor', concentrationCm3: 1 },
    crossSection: { widthUm: W, lengthUm: L, depthUm: 2 }, windows: [], junctions: [], rectangles: [rect],
    plan: { outlines: [{ polylinesUm: [[[2, 4], [5, 7]]] }], mirrorX: false, mirrorY: false },
    field: { layers: ['net', 'B'], shape: [2, z.length, y.length, x.length] },
  } as unknown as Report;
  return { id: 'r', dir: '', values: {}, report, x, y, z, field, layers: ['net', 'B'] };
}

describe('a 3D run as sections', () => {
  const sections = sectionRuns([run()]);

  it('gives the plan view and the three default cuts, each with its own width and kind', () => {
    expect(sections.map((s) => [s.id, s.section?.kind, s.report.crossSection.widthUm])).toEqual([
      ['r/plan', 'plan', W], ['r/cut-x', 'x', W], ['r/cut-y', 'y', L], ['r/cut-diagonal', 'diagonal', expect.closeTo(Math.SQRT2 * 8, 9)],
    ]);
    // The diagonal through the bottom-left corner (4, 3) along (1, 1) from (1, 0) to (9, 8).
    expect(sections[3].section?.title).toBe('cut along the diagonal through the bottom-left corner of rectangle 1 (4.00, 3.00) µm');
  });

  it('draws the report\'s outlines on the plan view with y up (depth = length − y)', () => {
    expect(sections[0].report.junctions[0].polylinesUm).toEqual([[[2, L - 4], [5, L - 7]]]);
    expect(sectionPlace(sections[0].section!, 2.5, 1)).toEqual([['x', 2.5], ['y', L - 1]]);
  });

  it('puts the report\'s reach at the ends of the window the cut crosses at an edge middle or the corner', () => {
    const [, cx, cy, cd] = sections;
    expect(cx.report.windows.map((w) => [w.x0Um, w.x1Um, w.lateralLeftUm, w.lateralRightUm])).toEqual([[4, 6, 0.91, 0.92]]);
    expect(cy.report.windows.map((w) => [w.x0Um, w.x1Um, w.lateralLeftUm, w.lateralRightUm])).toEqual([[3, 5, 0.93, 0.94]]);
    // Along the diagonal the window is from the corner (s = 3√2) to the top-right corner (5√2);
    // the outward diagonal of the bottom-left corner points to smaller s.
    const [w] = cd.report.windows;
    expect([w.x0Um, w.x1Um]).toEqual([expect.closeTo(3 * Math.SQRT2, 9), expect.closeTo(5 * Math.SQRT2, 9)]);
    expect([w.lateralLeftUm, w.lateralRightUm]).toEqual([0.51, null]);
    // Off the middle, the cut carries no reach.
    const off = sectionRuns([run()], { xCutAtYUm: 3.5, yCutAtXUm: null, corner: null })[1];
    expect(off.report.windows.map((v) => [v.lateralLeftUm, v.lateralRightUm])).toEqual([[null, null]]);
  });

  it('finds the junction of the field on each cut: the circle r = R where the cut crosses it (closed form)', () => {
    // Along x at y = 4 the surface crossings are x = 5 ± 3; along the diagonal through (4, 3),
    // which passes (5, 4) at s = 4√2, at s = 4√2 ± 3. The field is linear in r: only the
    // interpolation across the cone's tip and the cell centres' spacing (0.25 µm) err.
    for (const [k, centre] of [[1, 5], [3, 4 * Math.SQRT2]] as const) {
      const surface = sections[k].report.junctions[0].polylinesUm.flat().filter(([, d]) => d === 0).map(([s]) => s);
      expect(Math.abs(Math.min(...surface) - (centre - R))).toBeLessThan(0.02);
      expect(Math.abs(Math.max(...surface) - (centre + R))).toBeLessThan(0.02);
    }
    // The readout's place on the diagonal: s, then x, y, z of the 3D run.
    const place = sectionPlace(sections[3].section!, 4 * Math.SQRT2, 0.7);
    expect(place.map(([n]) => n)).toEqual(['s', 'x', 'y', 'z']);
    expect(place.slice(1).map(([, v]) => v)).toEqual([expect.closeTo(5, 12), expect.closeTo(4, 12), 0.7]);
  });

  it('takes a chosen corner when it is one of the outline\'s, else the default', () => {
    const report = run().report;
    expect(chosenCuts(report, { xCutAtYUm: null, yCutAtXUm: 4.2, corner: { rectangle: 0, corner: 'topRight' } }).slice(1)).toMatchObject([
      { kind: 'y', xUm: 4.2 }, { kind: 'diagonal', xUm: 6, yUm: 5, dx: 1, dy: 1 },
    ]);
    expect(chosenCuts(report, { xCutAtYUm: null, yCutAtXUm: null, corner: { rectangle: 3, corner: 'topRight' } })[2]).toMatchObject({ corner: 'bottomLeft' });
  });
});
