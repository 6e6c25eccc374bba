import { describe, expect, it } from 'vitest';
import { runRecipe, type RectangleReport } from '../../packages/solver2d/src/index.ts';
import { arrheniusUm2PerS, bisect } from '../support/closed-forms.ts';
import { depthFactor, windowFactor } from '../support/corner.ts';
import { TEST_DOPANT } from '../support/recipes.ts';

// A film in a rectangle and a drive-in with constant D, through the whole pipeline (recipe →
// plan with its default 3D mesh → 3D solve → report), against the exact separable solution
// C = Q/√(πDt)·exp(−z²/4Dt)·fx(x)·fy(y), f = ½[erf((u − u0)/2√(Dt)) − erf((u − u1)/2√(Dt))]
// (derived in corner-film.test.ts), with the walls' mirror images. erf from @stdlib.
const Q = 1e15;
const NB = 1e16;
const T = 1050;
const DT = 0.25;
const MINUTES = DT / arrheniusUm2PerS(TEST_DOPANT.D0Cm2PerS, TEST_DOPANT.EaEv, T) / 60;

function recipe3d(width: number, length: number, rectangles: number[][], mesh?: Record<string, number>, minutes = MINUTES, numerics?: Record<string, number>) {
  return {
    title: 'test: film in rectangles, then drive-in (invented)',
    substrate: { dopant: 'P', concentrationCm3: NB },
    crossSection: { widthUm: width, lengthUm: length },
    mask: { rectangles },
    dopants: { Q: TEST_DOPANT },
    ...(mesh ? { mesh } : {}),
    ...(numerics ? { numerics } : {}),
    steps: [{ kind: 'film', dopant: 'Q', doseCm2: Q }, { kind: 'drive-in', temperatureC: T, minutes }],
  };
}

describe('3D recipe: a film in a centred 4 × 6 µm rectangle against the exact solution, default mesh', () => {
  const W = 16;
  const L = 18;
  const [x0, y0, x1, y1] = [6, 6, 10, 12];
  const analysis = runRecipe(recipe3d(W, L, [[x0, y0, x1, y1]]));
  const { report } = analysis;
  const depth = analysis.field.space!.mesh.depthUm;
  const exact = (x: number, y: number, z: number) =>
    (Q / (Math.sqrt(Math.PI * DT) * 1e-4)) * depthFactor(z, depth, DT) * windowFactor(x, x0, x1, W, DT) * windowFactor(y, y0, y1, L, DT);
  const d = Math.SQRT1_2;
  const xc = 0.5 * (x0 + x1);
  const yc = 0.5 * (y0 + y1);
  const want = {
    xj: bisect((z) => exact(xc, yc, z) - NB, 0, depth),
    right: bisect((x) => exact(x, yc, 0) - NB, x1, W) - x1,
    top: bisect((y) => exact(xc, y, 0) - NB, y1, L) - y1,
    corner: bisect((s) => exact(x1 + s * d, y1 + s * d, 0) - NB, 0, 5),
  };
  const r = report.rectangles![0];
  const got = { xj: r.junctionDepthUm!, right: r.edgeReachUm.right!, top: r.edgeReachUm.top!, corner: r.cornerReachUm.topRight! };

  it('uses both mirror planes of the centred rectangle (a quarter is solved)', () => {
    expect(report.plan!.mirrorX).toBe(true);
    expect(report.plan!.mirrorY).toBe(true);
    expect(report.field.shape).toEqual([2, report.mesh.rows, 2 * report.mesh.columnsY!, 2 * report.mesh.columns]);
  });

  it('junction depth, edge reach and corner reach within 1 % of the exact values', () => {
    console.log(`3D recipe, ${report.mesh.columns} × ${report.mesh.columnsY} × ${report.mesh.rows}: ` +
      Object.entries(got).map(([k, v]) => `${k} ${v} (exact ${want[k as keyof typeof want].toFixed(5)}, ${(100 * (v / want[k as keyof typeof want] - 1)).toFixed(3)} %)`).join(', '));
    for (const k of Object.keys(want) as (keyof typeof want)[]) expect(Math.abs(got[k] / want[k] - 1)).toBeLessThan(0.01);
  });

  it('mirror-image edges and corners agree (left = right, bottom = top, all corners equal)', () => {
    expect(r.edgeReachUm.left).toBeCloseTo(r.edgeReachUm.right!, 9);
    expect(r.edgeReachUm.bottom).toBeCloseTo(r.edgeReachUm.top!, 9);
    for (const c of ['bottomLeft', 'bottomRight', 'topLeft'] as const) expect(r.cornerReachUm[c]).toBeCloseTo(r.cornerReachUm.topRight!, 9);
  });

  it('the dose placed is the dose in the silicon to 1e-9 (sealed drive-in)', () => {
    expect(report.ledger.Q.relativeImbalance).toBeLessThan(1e-9);
    expect(Math.abs(report.doseCm2.Q / Q - 1)).toBeLessThan(1e-6);
  });

  it('the surface outline is one closed loop around the rectangle, passing the measured reaches', () => {
    expect(report.plan!.outlines.length).toBe(1);
    const line = report.plan!.outlines[0].polylinesUm[0];
    expect(line[0]).toEqual(line[line.length - 1]);
    const xs = line.map((p) => p[0]);
    expect(Math.max(...xs) - x1).toBeCloseTo(got.right, 2);
  });
});

describe('an L-shaped window (two touching rectangles): convex corner < straight edge < concave corner', () => {
  // Common practice (no source): at a convex corner the dopant spreads into three quadrants of
  // masked surface and reaches less far than at a straight edge; at a concave corner it comes
  // from three quadrants of window and reaches further.
  const shape = [[3, 3, 9, 6], [3, 6, 6, 9]];
  // Mesh and time steps refined together (growth − 1 ∝ h), as the error bars' coarser solves are.
  const levels = [0.35, 0.5, 0.7].map((refine) =>
    runRecipe(recipe3d(12, 12, shape, { refine }, MINUTES * 0.4, { stepGrowth: 1 + (0.07 * 0.7) / refine })).report.rectangles!);
  const measure = (rs: RectangleReport[]) => ({
    convex: rs[0].cornerReachUm.bottomRight!,
    edge: rs[0].edgeReachUm.bottom!,
    concave: rs[1].cornerReachUm.bottomRight!,
  });
  const values = levels.map(measure);
  for (const v of values) console.log(`L-shape: convex ${v.convex}, edge ${v.edge}, concave ${v.concave} µm`);

  it('names the corners: the outer ones convex, the inside one concave', () => {
    expect(levels[2][0].cornerKind.bottomRight).toBe('convex');
    expect(levels[2][1].cornerKind.bottomRight).toBe('concave');
    expect(levels[2][0].cornerKind.topLeft).toBe(null);
  });

  it('convex corner reach < edge reach < concave corner reach on every mesh', () => {
    for (const v of values) {
      expect(v.convex).toBeLessThan(v.edge);
      expect(v.edge).toBeLessThan(v.concave);
    }
  });

  it('each converges: the change from mesh to mesh shrinks, or is already below 0.1 % (the project\'s own tolerance)', () => {
    // The convex corner is settled from the coarsest mesh on (it moves by 0.06 % and 0.08 %);
    // the edge and the concave corner approach their limits with the order of the scheme.
    for (const key of ['convex', 'edge', 'concave'] as const) {
      const d1 = Math.abs(values[1][key] - values[0][key]);
      const d2 = Math.abs(values[2][key] - values[1][key]);
      expect(d2 < d1 || d2 < 1e-3 * values[2][key]).toBe(true);
    }
    expect(Math.abs(values[2].concave - values[1].concave)).toBeLessThan(Math.abs(values[1].concave - values[0].concave));
    expect(Math.abs(values[2].edge - values[1].edge)).toBeLessThan(Math.abs(values[1].edge - values[0].edge));
  });
});
