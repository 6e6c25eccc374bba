import { describe, expect, it } from 'vitest';
import { gradedAxis, buildMesh, uniformAxis } from '../../packages/solver2d/src/mesh.ts';
import { geometricSteps } from '../../packages/solver2d/src/schedule.ts';
import { zeroContours, crossings, lateralReach, surfaceCrossing, wallPaddedGrid } from '../../packages/solver2d/src/junction.ts';
import { parseRecipe, planRecipe } from '../../packages/solver2d/src/index.ts';

const RULE = { fineUm: 0.02, fineReachUm: 0.5, grade: 0.15, maxUm: 0.5 };

describe('graded mesh', () => {
  const faces = gradedAxis(10, [3, 6.5], [3, 6.5], RULE);
  it('has a face on every fixed point and on both walls, strictly increasing', () => {
    for (const p of [0, 3, 6.5, 10]) expect(faces.some((f) => Math.abs(f - p) < 1e-12)).toBe(true);
    for (let k = 1; k < faces.length; k++) expect(faces[k]).toBeGreaterThan(faces[k - 1]);
  });
  it('is fine near the features and grows smoothly away from them (neighbour ratio ≤ 1.2)', () => {
    let finest = Infinity;
    for (let k = 1; k < faces.length; k++) {
      const h = faces[k] - faces[k - 1];
      finest = Math.min(finest, h);
      if (k > 1) {
        const ratio = h / (faces[k - 1] - faces[k - 2]);
        expect(Math.max(ratio, 1 / ratio)).toBeLessThan(1.2);
      }
      expect(h).toBeLessThanOrEqual(RULE.maxUm * 1.01);
    }
    expect(finest).toBeLessThanOrEqual(RULE.fineUm * 1.01);
  });
  it('takes user overrides of spacing and counts', () => {
    const base = {
      substrate: { dopant: 'P', concentrationCm3: 1e15 }, crossSection: { widthUm: 24 }, mask: { windows: [[8, 16]] },
      steps: [{ kind: 'predeposition', dopant: 'B', surfaceConcentrationCm3: 1e19, temperatureC: 1000, minutes: 30 }],
    };
    const counted = planRecipe(parseRecipe({ ...base, mesh: { columns: 120, rows: 60 } }));
    expect(Math.abs(counted.mesh.nx - 120)).toBeLessThanOrEqual(3);
    expect(Math.abs(counted.mesh.nz - 60)).toBeLessThanOrEqual(3);
    const spaced = planRecipe(parseRecipe({ ...base, mesh: { surfaceSpacingUm: 0.004 } }));
    expect(spaced.mesh.z[1] - spaced.mesh.z[0]).toBeLessThanOrEqual(0.004 * 1.01);
    const refined = planRecipe(parseRecipe({ ...base, mesh: { refine: 2 } }));
    const plain = planRecipe(parseRecipe(base));
    expect(refined.mesh.nz).toBeGreaterThan(1.8 * plain.mesh.nz);
  });
});

describe('geometric time steps', () => {
  it('sum to the duration exactly, start at the first step, and grow by at most the ratio', () => {
    for (const [total, first, growth] of [[3600, 0.01, 1.07], [60, 5, 1.2], [1e5, 1e-3, 1.01]]) {
      const steps = geometricSteps(total, first, growth);
      const sum = steps.reduce((a, b) => a + b, 0);
      expect(Math.abs(sum - total) / total).toBeLessThan(1e-12);
      expect(steps[0]).toBeCloseTo(first, 12);
      for (let k = 1; k < steps.length - 1; k++) expect(steps[k] / steps[k - 1]).toBeLessThanOrEqual(growth * (1 + 1e-12));
    }
  });
});

describe('junction finding', () => {
  it('marching squares traces a circle on a non-uniform grid within a small fraction of a cell', () => {
    // The zero set of r² − R² is a circle of radius R (closed form).
    const mesh = buildMesh(gradedAxis(4, [2], [2], { fineUm: 0.02, fineReachUm: 0.3, grade: 0.2, maxUm: 0.2 }), uniformAxis(2, 80));
    const f = new Float64Array(mesh.nx * mesh.nz);
    for (let j = 0; j < mesh.nz; j++) for (let i = 0; i < mesh.nx; i++) f[j * mesh.nx + i] = 1 - ((mesh.x[i] - 2) ** 2 + mesh.z[j] ** 2);
    const lines = zeroContours(wallPaddedGrid(mesh, f));
    expect(lines).toHaveLength(1);
    let worst = 0;
    for (const [x, z] of lines[0]) worst = Math.max(worst, Math.abs(Math.hypot(x - 2, z) - 1));
    // Linear interpolation of a quadratic across a cell of at most 0.2 µm: error ≤ h²/8 ≈ 5e-3.
    expect(worst).toBeLessThan(5e-3);
    // It meets the surface at x = 1 and x = 3 (same interpolation bound).
    const ends = [lines[0][0][0], lines[0][lines[0].length - 1][0]].sort((a, b) => a - b);
    expect(Math.abs(ends[0] - 1)).toBeLessThan(5e-3);
    expect(Math.abs(ends[1] - 3)).toBeLessThan(5e-3);
  });

  it('finds every sign change down a column by linear interpolation', () => {
    const z = Float64Array.from([0, 1, 2, 3, 4]);
    expect(crossings(Float64Array.from([1, -1, -1, 1, 1]), z)).toEqual([0.5, 2.5]);
  });
  // A region whose boundary is an ellipse centred below the surface (closed form): its widest
  // extent is the semi-axis A at the depth of the centre zc, beyond the edges x = 1.5 and 2.5.
  const ellipse = (zc: number) => {
    const mesh = buildMesh(uniformAxis(4, 400), uniformAxis(2, 100));
    const f = new Float64Array(mesh.nx * mesh.nz);
    for (let j = 0; j < mesh.nz; j++) for (let i = 0; i < mesh.nx; i++) f[j * mesh.nx + i] = 1 - ((mesh.x[i] - 2) / 0.8) ** 2 - ((mesh.z[j] - zc) / 0.5) ** 2;
    return wallPaddedGrid(mesh, f);
  };

  it('lateral reach of a bulge below the surface: the widest extent and its depth, between rows', () => {
    const grid = ellipse(0.217);
    const depth = 0.217 + 0.5;
    const left = lateralReach(grid, 2, 1.5, -1, 0, depth, 0)!;
    const right = lateralReach(grid, 2, 2.5, 1, 0, depth, 4)!;
    // Semi-axis 0.8 beyond the centre: 0.3 beyond each edge, at depth 0.217 (between rows 0.2 and 0.22).
    // Rows 0.02 µm apart: the widest row alone would be off in depth by up to 0.01 µm.
    for (const r of [left, right]) {
      expect(Math.abs(r.reachUm - 0.3)).toBeLessThan(2e-4);
      expect(Math.abs(r.depthUm - 0.217)).toBeLessThan(2e-3);
    }
    // Wider than where the contour meets the surface (0.8·√(1 − (0.217/0.5)²) − 0.5 ≈ 0.2207 µm).
    expect(1.5 - surfaceCrossing(grid, 2, -1)!).toBeCloseTo(0.8 * Math.sqrt(1 - (0.217 / 0.5) ** 2) - 0.5, 3);
  });

  it('lateral reach of a region that narrows with depth is its surface crossing, at depth 0, exactly', () => {
    const mesh = buildMesh(uniformAxis(4, 400), uniformAxis(2, 100));
    const f = new Float64Array(mesh.nx * mesh.nz);
    for (let j = 0; j < mesh.nz; j++) for (let i = 0; i < mesh.nx; i++) f[j * mesh.nx + i] = 1 - ((mesh.x[i] - 2) / 0.8) ** 2 - mesh.z[j] / 0.5;
    const grid = wallPaddedGrid(mesh, f);
    const left = lateralReach(grid, 2, 1.5, -1, 0, 0.5, 0)!;
    expect(left).toEqual({ reachUm: 1.5 - surfaceCrossing(grid, 2, -1)!, depthUm: 0 });
  });

  it('lateral reach of a buried region (an ellipse below the surface): rows between its two junctions', () => {
    const grid = ellipse(0.8);
    const r = lateralReach(grid, 2, 1.5, -1, 0.3, 1.3, 0)!;
    expect(Math.abs(r.reachUm - 0.3)).toBeLessThan(2e-4);
    expect(Math.abs(r.depthUm - 0.8)).toBeLessThan(2e-3);
  });

  it('no reach where the region runs past the limit (merged with a neighbour) at some depth', () => {
    expect(lateralReach(ellipse(0.217), 2, 1.5, -1, 0, 0.717, 1.75)).toBeNull();
    expect(lateralReach(ellipse(0.217), 2, 2.5, 1, 0, 0.717, 2.75)).toBeNull();
  });
});
