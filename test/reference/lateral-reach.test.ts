import { describe, expect, it } from 'vitest';
import { arrheniusUm2PerS, bisect, implantField, type ImplantCase } from '../support/closed-forms.ts';
import { filmRecipe, implantRecipe, predepositionRecipe, TEST_DOPANT } from '../support/recipes.ts';
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

/** The implant annealed in a 5 µm cross-section, solved, and its exact separable solution. */
function annealedImplant(implant: { doseCm2: number; projectedRangeUm: number; straggleUm: number; lateralStraggleUm: number },
                         window: [number, number], anneal: { temperatureC: number; minutes: number }) {
  const run = solve(implantRecipe({ widthUm: 5, windows: [window], background: NB, implant, anneals: [anneal] }));
  const dt = arrheniusUm2PerS(TEST_DOPANT.D0Cm2PerS, TEST_DOPANT.EaEv, anneal.temperatureC) * anneal.minutes * 60;
  const exact: ImplantCase = {
    q: implant.doseCm2, rp: implant.projectedRangeUm, straggle: implant.straggleUm, lateralStraggle: implant.lateralStraggleUm,
    dt, x0: window[0], x1: window[1], width: 5, depth: run.plan.mesh.depthUm,
  };
  return { run, exact };
}

// An implant peaked below the surface, annealed with constant D (the test dopant has no
// charged terms): its junction bulges sideways below the surface, beyond the surface lateral.
describe('lateral reach of an annealed implant, against the exact separable solution', () => {
  // Rp = 5σ: the as-implanted Gaussian is all in the silicon to 3e-7 of its dose (implantField).
  const implant = { doseCm2: 3e14, projectedRangeUm: 0.2, straggleUm: 0.04, lateralStraggleUm: 0.04 };
  const window: [number, number] = [1.5, 3.5];
  const anneal = { temperatureC: 1000, minutes: 20 };
  const { run, exact } = annealedImplant(implant, window, anneal);
  const truth = exactReach(exact, window[0]);
  const surface = window[0] - bisect((x) => implantField(exact, x, 0) - NB, 0, window[0]);
  const w = run.report.windows[0];
  const left = { reachUm: w.lateralReachLeftUm!, depthUm: w.lateralReachDepthLeftUm! };
  const right = { reachUm: w.lateralReachRightUm!, depthUm: w.lateralReachDepthRightUm! };

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

  it('drawn width plus lateral uses the reach on both sides, the larger measure', () => {
    expect(w.drawnPlusLateralUm).toBeCloseTo(2 + w.lateralReachLeftUm! + w.lateralReachRightUm!, 5);
    expect(w.drawnPlusLateralUm!).toBeGreaterThan(2 + w.lateralLeftUm! + w.lateralRightUm! + 0.1);
  });
});

// A constant surface source, and a film driven in, fall monotonically with depth everywhere
// (erfc and Gaussian, closed forms), so the junction is widest at the surface: the reach is the
// surface lateral encroachment, at depth 0.
describe('lateral reach of a surface source', () => {
  const cases = [
    ['constant source', solve(predepositionRecipe({ widthUm: 6, windows: [[2, 4]], background: NB, cs: 1e19, temperatureC: 1050, minutes: 20 }))],
    ['film driven in', solve(filmRecipe({ widthUm: 6, windows: [[2, 4]], background: NB, dose: 1e14, temperatureC: 1050, minutes: 20 }))],
  ] as const;
  for (const [name, run] of cases) {
    it(`${name}: equals the surface lateral encroachment at depth 0 on both edges`, () => {
      const w = run.report.windows[0];
      expect(w.lateralReachLeftUm).toBe(w.lateralLeftUm);
      expect(w.lateralReachRightUm).toBe(w.lateralRightUm);
      expect(w.lateralReachDepthLeftUm).toBe(0);
      expect(w.lateralReachDepthRightUm).toBe(0);
      expect(w.drawnPlusLateralUm).toBeCloseTo(2 + w.lateralLeftUm! + w.lateralRightUm!, 5);
    });
  }
});

// An implant too deep and too light to reach the surface is a buried layer: it meets no
// surface, so it has no surface lateral, but its own widest extent beyond each mask edge
// (the exact separable solution again, at the depth where v(z) is largest).
describe('lateral reach of a buried implant', () => {
  const implant = { doseCm2: 1e14, projectedRangeUm: 0.4, straggleUm: 0.08, lateralStraggleUm: 0.08 };
  const window: [number, number] = [1.5, 3.5];
  const anneal = { temperatureC: 950, minutes: 20 };
  const { run, exact } = annealedImplant(implant, window, anneal);
  const truth = exactReach(exact, window[0]);
  const w = run.report.windows[0];
  it('has no surface lateral, and its reach within 0.3 % of the layer thickness of the exact one, at its depth within 2 %', () => {
    const thickness = w.junctionDepthsUm[1] - w.junctionDepthsUm[0];
    console.log(`buried implant: layer ${w.junctionDepthsUm.join(' to ')} µm, reach exact ${truth.reachUm.toFixed(4)} at ${truth.depthUm.toFixed(4)} µm, ` +
      `solved L ${w.lateralReachLeftUm} at ${w.lateralReachDepthLeftUm}, R ${w.lateralReachRightUm} at ${w.lateralReachDepthRightUm}`);
    expect(w.lateralLeftUm).toBeNull();
    expect(w.lateralRightUm).toBeNull();
    for (const [reach, depth] of [[w.lateralReachLeftUm, w.lateralReachDepthLeftUm], [w.lateralReachRightUm, w.lateralReachDepthRightUm]]) {
      expect(Math.abs(reach! - truth.reachUm) / thickness).toBeLessThan(0.003);
      expect(Math.abs(depth! - truth.depthUm) / thickness).toBeLessThan(0.02);
    }
  });
});
