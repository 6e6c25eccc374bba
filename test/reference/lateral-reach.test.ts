import { describe, expect, it } from 'vitest';
import { lateralReach } from '../../packages/solver2d/src/junction.ts';
import { arrheniusUm2PerS, bisect, implantField, type ImplantCase } from '../support/closed-forms.ts';
import { implantRecipe, predepositionRecipe, TEST_DOPANT } from '../support/recipes.ts';
import { solve } from '../support/solve.ts';

const NB = 1e16;

/**
 * The exact lateral reach of an annealed implant (closed form, implantField): the field is
 * K·v(z)·l(x), so at every depth the junction lies where l(x) = NB/(K·v(z)); l falls
 * monotonically beyond the mask edge, so the extent is largest where v is: at the depth z*
 * where v′(z*) = 0 below the surface (the sealed surface is a mirror, so z = 0 is always a
 * stationary point of v; the buried peak makes it a minimum when Rp is a few straggles deep).
 */
function exactReach(c: ImplantCase, edge: number): { reachUm: number; depthUm: number } {
  const v = (z: number) => implantField(c, 0.5 * (c.x0 + c.x1), z);
  const h = 1e-6;
  const zStar = bisect((z) => (v(z + h) - v(z - h)) / (2 * h), 1e-4, c.rp);
  const x = bisect((xx) => implantField(c, xx, zStar) - NB, 0, edge);
  return { reachUm: edge - x, depthUm: zStar };
}

// An implant peaked below the surface, annealed with constant D (the test dopant has no
// charged terms): its junction bulges sideways below the surface, beyond the surface lateral.
describe('lateral reach of an annealed implant, against the exact separable solution', () => {
  // Rp = 5σ: the as-implanted Gaussian is all in the silicon to 3e-7 of its dose (implantField).
  const implant = { doseCm2: 3e14, projectedRangeUm: 0.2, straggleUm: 0.04, lateralStraggleUm: 0.04 };
  const window: [number, number] = [1.5, 3.5];
  const anneal = { temperatureC: 1000, minutes: 20 };
  const run = solve(implantRecipe({ widthUm: 5, windows: [window], background: NB, implant, anneals: [anneal] }));
  const dt = arrheniusUm2PerS(TEST_DOPANT.D0Cm2PerS, TEST_DOPANT.EaEv, anneal.temperatureC) * anneal.minutes * 60;
  const exact: ImplantCase = {
    q: implant.doseCm2, rp: implant.projectedRangeUm, straggle: implant.straggleUm, lateralStraggle: implant.lateralStraggleUm,
    dt, x0: window[0], x1: window[1], width: 5, depth: run.plan.mesh.depthUm,
  };
  const truth = exactReach(exact, window[0]);
  const surface = window[0] - bisect((x) => implantField(exact, x, 0) - NB, 0, window[0]);
  const w = run.report.windows[0];
  const left = lateralReach(run.grid, 2.5, window[0], -1, 0, w.junctionDepthUm, 0)!;
  const right = lateralReach(run.grid, 2.5, window[1], 1, 0, w.junctionDepthUm, 5)!;

  it('reaches further than the surface lateral, within 0.3 % of xj of the exact reach, at the exact depth within 2 % of xj', () => {
    console.log(`implant reach: exact ${truth.reachUm.toFixed(4)} µm at ${truth.depthUm.toFixed(4)} µm (surface lateral ${surface.toFixed(4)} µm); ` +
      `solved L ${left.reachUm.toFixed(4)} at ${left.depthUm.toFixed(4)}, R ${right.reachUm.toFixed(4)} at ${right.depthUm.toFixed(4)}; ` +
      `surface lateral ${w.lateralLeftUm}, xj ${w.junctionDepthUm}`);
    expect(truth.reachUm).toBeGreaterThan(surface * 1.02);
    for (const r of [left, right]) {
      expect(Math.abs(r.reachUm - truth.reachUm) / w.junctionDepthUm!).toBeLessThan(0.003);
      expect(Math.abs(r.depthUm - truth.depthUm) / w.junctionDepthUm!).toBeLessThan(0.02);
    }
  });
});

// A constant surface source falls monotonically with depth everywhere, so its junction is
// widest at the surface: the reach is the surface lateral encroachment, at depth 0.
describe('lateral reach of a surface source', () => {
  const run = solve(predepositionRecipe({ widthUm: 6, windows: [[2, 4]], background: NB, cs: 1e19, temperatureC: 1050, minutes: 20 }));
  const w = run.report.windows[0];
  it('equals the surface lateral encroachment at depth 0 on both edges', () => {
    expect(lateralReach(run.grid, 3, 2, -1, 0, w.junctionDepthUm, 0)).toEqual({ reachUm: expect.closeTo(w.lateralLeftUm!, 5), depthUm: 0 });
    expect(lateralReach(run.grid, 3, 4, 1, 0, w.junctionDepthUm, 6)).toEqual({ reachUm: expect.closeTo(w.lateralRightUm!, 5), depthUm: 0 });
  });
});
