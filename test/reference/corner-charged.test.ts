import { describe, expect, it } from 'vitest';
import { runRecipe } from '../../packages/solver2d/src/index.ts';

// Concentration-dependent diffusion (charged-defect boron, the 2D model checked in
// concentration-dependent.test.ts against Fair 1981 and Barenblatt's solution) in 3D: far from
// its ends a long window is a 2D problem (translation invariance along y), so the 3D solve's
// middle section must reproduce the 2D solve of the cross-section on the same x and z spacing.
const steps = [
  { kind: 'predeposition', dopant: 'B', surfaceConcentrationCm3: 1e20, temperatureC: 1000, minutes: 20 },
  { kind: 'drive-in', temperatureC: 1050, minutes: 30 },
];
const base = { title: 'test: charged-defect boron, 2D against a long 3D stripe (invented)', substrate: { dopant: 'P', concentrationCm3: 1e16 }, steps };

describe('charged-defect boron in 3D', () => {
  // The 3D default density is 0.7 of the 2D rules': refine 0.5/0.7 gives the 2D spacing at refine 0.5.
  const two = runRecipe({ ...base, crossSection: { widthUm: 6 }, mask: { windows: [[2, 4]] }, mesh: { refine: 0.5 } }).report;
  const three = runRecipe({ ...base, crossSection: { widthUm: 6, lengthUm: 24 }, mask: { rectangles: [[2, 2, 4, 22]] }, mesh: { refine: 0.5 / 0.7 } }).report;
  const w = two.windows[0];
  const r = three.rectangles![0];

  it('a 20 µm long stripe reproduces the 2D solve of its cross-section: xj and lateral reach within 0.5 %', () => {
    console.log(`charged-defect: xj 3D ${r.junctionDepthUm} 2D ${w.junctionDepthUm}; reach 3D ${r.edgeReachUm.right} 2D ${w.lateralRightUm} µm`);
    expect(Math.abs(r.junctionDepthUm! / w.junctionDepthUm! - 1)).toBeLessThan(0.005);
    expect(Math.abs(r.edgeReachUm.right! / w.lateralRightUm! - 1)).toBeLessThan(0.005);
    expect(Math.abs(r.edgeReachUm.left! / w.lateralLeftUm! - 1)).toBeLessThan(0.005);
  });

  it('takes the same time steps as the 2D solve (the clocks follow the same peak), and keeps the dose ledger to 1e-9', () => {
    expect(three.steps.map((s) => s.timeSteps)).toEqual(two.steps.map((s) => s.timeSteps));
    expect(three.ledger.B.relativeImbalance).toBeLessThan(1e-9);
  });

  it('its convex corners reach less far than its long edges', () => {
    expect(r.cornerReachUm.topRight!).toBeLessThan(r.edgeReachUm.right!);
  });
});
