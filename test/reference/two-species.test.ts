import { describe, expect, it } from 'vitest';
import { carriers, intrinsicCarriersCm3 } from '../../packages/solver2d/src/intrinsic.ts';
import { solve } from '../support/solve.ts';

// A boron base then a phosphorus emitter in n-type silicon (invented scenario): two
// junctions below the emitter window (emitter–base, then base–collector), one below the
// base window beside it (common practice: the structure of a diffused bipolar transistor).
describe('two species: base and emitter', () => {
  const run = solve({
    title: 'test: base then emitter (invented)',
    substrate: { dopant: 'P', concentrationCm3: 1e16 },
    crossSection: { widthUm: 20 },
    mask: { windows: [[4, 16]] },
    steps: [
      { kind: 'predeposition', dopant: 'B', surfaceConcentrationCm3: 5e19, temperatureC: 1000, minutes: 20 },
      { kind: 'drive-in', temperatureC: 1100, minutes: 60 },
      { kind: 'film', dopant: 'P', doseCm2: 5e15 },
      { kind: 'drive-in', temperatureC: 1000, minutes: 30 },
    ],
  });
  const w = run.report.windows[0];

  it('finds both junctions below the window centre, emitter above base', () => {
    console.log(`base/emitter: junctions at ${w.junctionDepthsUm.join(', ')} µm`);
    expect(w.junctionDepthsUm).toHaveLength(2);
    expect(w.junctionDepthsUm[0]).toBeLessThan(w.junctionDepthsUm[1]);
    expect(run.report.junctions.length).toBeGreaterThanOrEqual(2);
  });

  it('reports depth and lateral encroachment for each junction', () => {
    expect(w.junctionStack).toHaveLength(2);
    for (const j of w.junctionStack) {
      expect(j.lateralLeftUm).toBeGreaterThan(0);
      expect(Math.abs(j.lateralLeftUm! - j.lateralRightUm!)).toBeLessThan(1e-6);
    }
    // The base reaches further under the mask than the emitter.
    expect(w.junctionStack[1].lateralLeftUm!).toBeGreaterThan(w.junctionStack[0].lateralLeftUm!);
  });

  it('n·p = ni² and n − p = net doping where the carriers are computed (1e-12)', () => {
    const ni = intrinsicCarriersCm3(1000);
    const net = run.field.layers.net.data;
    for (let k = 0; k < net.length; k += 97) {
      const { n, p } = carriers(net[k], ni);
      expect(Math.abs((n * p) / (ni * ni) - 1)).toBeLessThan(1e-12);
      expect(Math.abs(n - p - net[k])).toBeLessThanOrEqual(1e-12 * Math.max(Math.abs(net[k]), ni));
    }
  });

  it('conserves each species\' dose (1e-9)', () => {
    expect(run.sim.ledger.B.relativeImbalance).toBeLessThan(1e-9);
    expect(run.sim.ledger.P.relativeImbalance).toBeLessThan(1e-9);
  });
});
