import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { activeConcentration, ACTIVATION_LAWS } from '../../packages/solver2d/src/activation.ts';
import { BUILTIN_DOPANTS } from '../../packages/solver2d/src/dopants.ts';
import { kinkElectronsCm3, surfaceElectronsCm3, tailDiffusivityCm2PerS } from '../../packages/solver2d/src/phosphorus-kink.ts';
import { parseRecipe, planRecipe, RecipeError, runRecipe } from '../../packages/solver2d/src/index.ts';
import { erfc } from '../support/closed-forms.ts';
import { REGRESSION_CASES } from '../support/regression-cases.ts';
import { columnAtX, solve } from '../support/solve.ts';

/*
 * The high-concentration models in the solver: the Fair–Tsai kink and tail of phosphorus,
 * arsenic clusters and boron above its solid solubility (activation.ts), their switches, and
 * the answer with every switch off against the fields recorded before these models existed.
 */

const OFF = { phosphorusKink: false, clustering: false, ted: false, oxidationEnhanced: false };

function predeposition(temperatureC: number, minutes: number, cs: number | 'solubility', extra: Record<string, unknown> = {}) {
  return {
    substrate: { dopant: 'B', concentrationCm3: 1e16 }, crossSection: { widthUm: 5 }, mask: { windows: [[0, 2]] },
    steps: [{ kind: 'predeposition', dopant: 'P', surfaceConcentrationCm3: cs, temperatureC, minutes }],
    ...extra,
  };
}

/** Depth where a falling column first crosses c (log-linear between nodes), µm. */
function depthAt(col: Float64Array, z: Float64Array, c: number): number {
  for (let j = 0; j + 1 < z.length; j++) {
    if (col[j] >= c && col[j + 1] < c) return z[j] + (Math.log(col[j] / c) / Math.log(col[j] / col[j + 1])) * (z[j + 1] - z[j]);
  }
  return NaN;
}

describe('phosphorus kink and tail (Fair and Tsai 1977)', () => {
  const T = 900;
  const minutes = 20;
  const run = solve(predeposition(T, minutes, 'solubility'));
  const { mesh } = run.plan;
  const col = columnAtX(mesh, run.sim.concentration.P, 0.3);

  it('a predeposition at solubility at 900 °C shows a kink within 25 % of n_e(T) (Fair and Tsai 1977; from memory)', () => {
    // The kink: where the slope of ln C turns most sharply from steep to shallow, above 1e18.
    let sharpest = -Infinity;
    let kink = -1;
    for (let j = 1; j + 1 < mesh.nz && col[j] > 1e18; j++) {
      const before = (Math.log(col[j]) - Math.log(col[j - 1])) / (mesh.z[j] - mesh.z[j - 1]);
      const after = (Math.log(col[j + 1]) - Math.log(col[j])) / (mesh.z[j + 1] - mesh.z[j]);
      if (after - before > sharpest) { sharpest = after - before; kink = j; }
    }
    expect(Math.abs(col[kink] / kinkElectronsCm3(T) - 1)).toBeLessThan(0.25);
    // A surface region above it (at least twice n_e at the surface) and a tail below.
    expect(col[0]).toBeGreaterThan(2 * kinkElectronsCm3(T));
  });

  it('the tail below the kink is erfc(z/2√(D·t)) with the stated D_tail, fitted from C = 1e18 and 1e16 cm^-3, within 5 % (similarity solution of constant-D diffusion)', () => {
    // At a fixed temperature and surface value the whole profile is a function of z/√t, and the
    // tail, where D is uniform, is B·erfc(z/2√(D_tail·t)): the ratio of C at two depths gives D.
    const z1 = depthAt(col, mesh.z, 1e18);
    const z2 = depthAt(col, mesh.z, 1e16);
    let lo = 1e-4;
    let hi = 10;
    for (let k = 0; k < 200; k++) {
      const l = Math.sqrt(lo * hi);
      if (erfc(z1 / l) / erfc(z2 / l) > 100) lo = l;
      else hi = l;
    }
    const length = Math.sqrt(lo * hi);
    const fitted = ((length * length) / 4 / (minutes * 60)) * 1e-8;
    const stated = tailDiffusivityCm2PerS(BUILTIN_DOPANTS.P, T, surfaceElectronsCm3(col[0]))!;
    expect(Math.abs(fitted / stated - 1)).toBeLessThan(0.05);
  });

  it('the tail spreads sideways under the mask: lateral reach is 0.75–0.9 of xj (Kennedy and O\'Brien 1965, common practice)', () => {
    const w = run.report.windows[0];
    expect(w.lateralRightUm! / w.junctionDepthUm!).toBeGreaterThan(0.7);
    expect(w.lateralRightUm! / w.junctionDepthUm!).toBeLessThan(0.95);
  });

  it('an emitter-like diffusion (850 °C, 20 min, Cs 3e20 cm^-3 into 1e16 cm^-3 p-type) gives xj 0.25–0.5 µm and 30–120 Ω/sq (common practice, no source)', () => {
    const r = runRecipe(predeposition(850, 20, 3e20));
    const w = r.report.windows[0];
    expect(w.junctionDepthUm!).toBeGreaterThan(0.25);
    expect(w.junctionDepthUm!).toBeLessThan(0.5);
    expect(w.sheetResistanceOhmSq!).toBeGreaterThan(30);
    expect(w.sheetResistanceOhmSq!).toBeLessThan(120);
    // Without the kink the same recipe is the box profile the issue complained of, far shallower.
    const box = runRecipe(predeposition(850, 20, 3e20, { physics: { phosphorusKink: false } })).report.windows[0];
    expect(box.junctionDepthUm!).toBeLessThan(0.5 * w.junctionDepthUm!);
    expect(r.report.models.map((m) => m.model)).toContain('phosphorus-kink');
  });
});

describe('arsenic clusters and boron above its solubility (one active/inactive split)', () => {
  const arsenic = (clustering: boolean) => solve({
    substrate: { dopant: 'B', concentrationCm3: 1e16 }, crossSection: { widthUm: 2 }, mask: { windows: [[0, 1]] },
    physics: { clustering },
    steps: [{ kind: 'implant', dopant: 'As', doseCm2: 5e15, projectedRangeUm: 0.05, straggleUm: 0.02 },
      { kind: 'anneal', temperatureC: 1000, minutes: 30 }],
  });
  const on = arsenic(true);
  const off = arsenic(false);

  it('active arsenic is the cluster equilibrium of the total at every node and never above its value at the peak total (Tsai et al. 1980 form)', () => {
    const total = on.sim.concentration.As;
    const active = on.sim.active.As;
    const law = ACTIVATION_LAWS.As;
    const limit = law.limitCm3(1000);
    let peak = 0;
    for (const c of total) peak = Math.max(peak, c);
    const ceiling = activeConcentration(peak, limit, law.clusterSize);
    for (let k = 0; k < total.length; k += 7) {
      expect(active[k]).toBeLessThanOrEqual(ceiling * (1 + 1e-12));
      expect(Math.abs(active[k] - activeConcentration(total[k], limit, law.clusterSize))).toBeLessThanOrEqual(1e-12 * peak);
    }
    expect(on.report.activation.As.peakActiveCm3).toBeLessThanOrEqual(ceiling * (1 + 1e-5)); // the report rounds to 6 digits
    expect(on.report.activation.As.activeDoseCm2).toBeLessThan(on.report.activation.As.totalDoseCm2);
  });

  it('Rs of a 5e15 cm^-2 arsenic layer after a furnace anneal is above the all-active value (clusters do not conduct; common practice)', () => {
    expect(on.report.windows[0].sheetResistanceOhmSq!).toBeGreaterThan(1.1 * off.report.windows[0].sheetResistanceOhmSq!);
    // …and the clusters hold the profile back: the junction is shallower than with all of it mobile.
    expect(on.report.windows[0].junctionDepthUm!).toBeLessThan(off.report.windows[0].junctionDepthUm!);
  });

  it('dose (active + inactive) is conserved in the sealed anneal to 1e-9 (finite volumes: the total diffuses)', () => {
    expect(on.sim.ledger.As.relativeImbalance).toBeLessThan(1e-9);
  });

  // TED is off here: this checks the active/inactive split alone (TED has its own tests, and
  // at 1e16 cm^-2 the "+1" pool would move the whole profile).
  const boron = (clustering: boolean) => solve({
    substrate: { dopant: 'P', concentrationCm3: 1e15 }, crossSection: { widthUm: 2 }, mask: { windows: [[0, 1]] },
    physics: { clustering, ted: false },
    steps: [{ kind: 'implant', dopant: 'B', doseCm2: 1e16, projectedRangeUm: 0.1, straggleUm: 0.03 },
      { kind: 'anneal', temperatureC: 900, minutes: 30 }],
  });
  const b = boron(true);
  const bAll = boron(false);

  it('a 1e16 cm^-2 boron implant annealed at 900 °C leaves its inactive peak where it was implanted (within 5 nm of Rp) holding most of the dose (Trumbore 1960 solubility)', () => {
    const { mesh } = b.plan;
    const total = columnAtX(mesh, b.sim.concentration.B, 0.2);
    const active = columnAtX(mesh, b.sim.active.B, 0.2);
    let top = 0;
    let at = 0;
    let inactive = 0;
    let all = 0;
    for (let j = 0; j < mesh.nz; j++) {
      const v = total[j] - active[j];
      if (v > top) { top = v; at = mesh.z[j]; }
      inactive += v * mesh.dzVolume[j];
      all += total[j] * mesh.dzVolume[j];
    }
    expect(Math.abs(at - 0.1)).toBeLessThan(0.005);
    expect(inactive / all).toBeGreaterThan(0.5);
    expect(b.sim.ledger.B.relativeImbalance).toBeLessThan(1e-9);
  });

  it('Rs of that layer counts only the active boron: above the all-active value, and the active dose below the total', () => {
    expect(b.report.windows[0].sheetResistanceOhmSq!).toBeGreaterThan(1.5 * bAll.report.windows[0].sheetResistanceOhmSq!);
    expect(b.report.activation.B.activeDoseCm2).toBeLessThan(0.5 * b.report.activation.B.totalDoseCm2);
    expect(b.report.field.layers).toContain('B active');
  });
});

describe('switches', () => {
  const before = JSON.parse(readFileSync(new URL('../fixtures/before-high-concentration-models.json', import.meta.url), 'utf8'));
  for (const [name, recipe] of Object.entries(REGRESSION_CASES)) {
    it(`every switch off gives the fields recorded before these models to 1e-9: ${name}`, () => {
      const r = runRecipe({ ...recipe, physics: OFF });
      const expected = before[name];
      const { nx, nz } = r.field.mesh;
      expect([nx, nz]).toEqual([expected.nx, expected.nz]);
      for (const layer of Object.keys(expected.samples)) {
        const d = r.field.layers[layer].data;
        const got: number[] = [];
        for (let j = 0; j < nz; j += Math.max(1, Math.floor(nz / 12))) for (let i = 0; i < nx; i += Math.max(1, Math.floor(nx / 6))) got.push(d[j * nx + i]);
        const scale = Math.max(...expected.samples[layer].map(Math.abs));
        got.forEach((v, k) => expect(Math.abs(v - expected.samples[layer][k])).toBeLessThanOrEqual(1e-9 * scale));
      }
    });
  }

  it('a model switched on for a recipe without its species is refused in one line naming the switch', () => {
    const boronOnly = { ...predeposition(900, 10, 1e19), steps: [{ kind: 'predeposition', dopant: 'B', surfaceConcentrationCm3: 1e19, temperatureC: 900, minutes: 10 }], substrate: { dopant: 'P', concentrationCm3: 1e15 } };
    expect(() => planRecipe(parseRecipe({ ...boronOnly, physics: { phosphorusKink: true } }))).toThrow(RecipeError);
    expect(() => planRecipe(parseRecipe({ ...boronOnly, physics: { phosphorusKink: true } }))).toThrow(/^physics\.phosphorusKink: applies to phosphorus/);
    expect(() => planRecipe(parseRecipe({ ...predeposition(900, 10, 1e19), physics: { clustering: true } }))).toThrow(/^physics\.clustering: applies to arsenic/);
    expect(() => planRecipe(parseRecipe({ ...predeposition(900, 10, 1e19), diffusion: { model: 'intrinsic' }, physics: { phosphorusKink: true } })))
      .toThrow(/^physics\.phosphorusKink: applies to phosphorus with the charged-defect/);
    expect(() => parseRecipe({ ...predeposition(900, 10, 1e19), physics: { kink: true } })).toThrow(/^physics: unknown key "kink"/);
  });
});

describe('convergence of the new models (self-convergence, order from three solves halving the spacing or the step ratio)', () => {
  const emitter = (mesh: object, numerics: object) => runRecipe({ ...predeposition(850, 20, 3e20), mesh, numerics }).report.windows[0].junctionDepthUm!;
  const arsenic = (mesh: object, numerics: object) => runRecipe({
    substrate: { dopant: 'B', concentrationCm3: 1e16 }, crossSection: { widthUm: 2 }, mask: { windows: [[0, 1]] }, mesh, numerics,
    steps: [{ kind: 'implant', dopant: 'As', doseCm2: 5e15, projectedRangeUm: 0.05, straggleUm: 0.02 }, { kind: 'anneal', temperatureC: 1000, minutes: 30 }],
  }).report.windows[0].junctionDepthUm!;
  const order = (x: number[]) => Math.log2(Math.abs(x[0] - x[1]) / Math.abs(x[1] - x[2]));

  it('kink and tail: xj converges in the mesh with order ≥ 1 (refine 0.5, 1, 2)', () => {
    const xj = [0.5, 1, 2].map((refine) => emitter({ refine }, { stepGrowth: 1.02 }));
    expect(order(xj)).toBeGreaterThanOrEqual(1);
  });

  it('clustering: xj converges in the mesh (refine 0.35, 0.7, 1.4) and in the steps (growth 1.04, 1.02, 1.01) with order ≥ 1', () => {
    expect(order([0.35, 0.7, 1.4].map((refine) => arsenic({ refine }, { stepGrowth: 1.02 })))).toBeGreaterThanOrEqual(1);
    expect(order([1.04, 1.02, 1.01].map((stepGrowth) => arsenic({ refine: 0.5 }, { stepGrowth })))).toBeGreaterThanOrEqual(1);
  });
});
