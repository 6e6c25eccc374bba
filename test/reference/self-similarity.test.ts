import { describe, expect, it } from 'vitest';
import { predepositionRecipe } from '../support/recipes.ts';
import { solve } from '../support/solve.ts';
import type { Polyline } from '../../packages/solver2d/src/index.ts';

/** Shortest distance from a point to a polyline. */
function distanceToPolyline(p: [number, number], line: Polyline): number {
  let best = Infinity;
  for (let k = 0; k + 1 < line.length; k++) {
    const [ax, az] = line[k];
    const [bx, bz] = line[k + 1];
    const dx = bx - ax, dz = bz - az;
    const t = Math.max(0, Math.min(1, ((p[0] - ax) * dx + (p[1] - az) * dz) / (dx * dx + dz * dz || 1)));
    best = Math.min(best, Math.hypot(p[0] - ax - t * dx, p[1] - az - t * dz));
  }
  return best;
}

// Closed-form property (REFERENCES.md): with one mask edge and constant D the solution
// depends only on (x/√(Dt), z/√(Dt)), so junction contours at two values of Dt coincide
// once scaled by √(Dt). The window runs to the right wall: its left edge is the only edge.
describe('self-similarity at a single mask edge', () => {
  const edge = 20;
  const runs = [15, 60].map((minutes) => solve(predepositionRecipe({ widthUm: 40, windows: [[edge, 40]], cs: 1e20, background: 1e17, temperatureC: 1050, minutes })));
  const scaled = runs.map((r) => {
    const s = Math.sqrt(r.plan.thermalBudgetUm2.Q);
    return r.report.junctions[0].polylinesUm[0].map(([x, z]) => [(x - edge) / s, z / s] as [number, number]);
  });

  it('contours at Dt and 4·Dt coincide within 0.5 % of the scaled junction depth', () => {
    const scaledDepth = runs[1].report.windows[0].junctionDepthUm! / Math.sqrt(runs[1].plan.thermalBudgetUm2.Q);
    // Compare the curved part near the edge, where the shape is two-dimensional.
    const near = scaled[0].filter(([x]) => x > -3 * scaledDepth && x < 2 * scaledDepth);
    expect(near.length).toBeGreaterThan(20);
    let worst = 0;
    for (const p of near) worst = Math.max(worst, distanceToPolyline(p, scaled[1]));
    console.log(`self-similarity: worst scaled distance ${(worst / scaledDepth * 100).toFixed(3)} % of scaled xj`);
    expect(worst / scaledDepth).toBeLessThan(0.005);
  });

  it('the Dt ratio of 4 doubles the junction depth and the lateral encroachment (0.5 %)', () => {
    const [a, b] = runs.map((r) => r.report.windows[0]);
    expect(Math.abs(b.junctionDepthUm! / a.junctionDepthUm! - 2)).toBeLessThan(0.01);
    expect(Math.abs(b.lateralLeftUm! / a.lateralLeftUm! - 2)).toBeLessThan(0.01);
  });
});
