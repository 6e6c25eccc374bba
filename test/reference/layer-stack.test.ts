import erf from '@stdlib/math-base-special-erf';
import { describe, expect, it } from 'vitest';
import { conductivitySPerCm, MOBILITY_FITS } from '../../packages/solver2d/src/mobility.ts';
import { reportSchema } from '../../packages/solver2d/src/report-schema.ts';
import { UM_TO_CM } from '../../packages/solver2d/src/units.ts';
import { solve } from '../support/solve.ts';

// The layers below a window centre, each between the surface or a junction and the next
// junction, and the sheet resistance of each alone (J.C. Irvin, Bell Syst. Tech. J. 41 (1962)
// 387: 1/Rs = ∫ q·μ·|N_D − N_A| dz over the layer; for a buried layer this is its pinched
// sheet resistance, common practice for base and well resistors).

/** As-implanted Gaussian (Rp, σ) holding `dose` in the silicon below z = 0 (the implant's own convention). */
function gaussian(dose: number, rp: number, sigma: number) {
  const inSilicon = 0.5 * (1 - erf(-rp / (Math.SQRT2 * sigma)));
  return (z: number) => (dose * Math.exp(-((z - rp) ** 2) / (2 * sigma * sigma))) / (Math.sqrt(2 * Math.PI) * sigma * UM_TO_CM * inSilicon);
}

/** Simpson's rule with n (even) intervals. */
function simpson(f: (z: number) => number, a: number, b: number, n = 20000): number {
  const h = (b - a) / n;
  let sum = f(a) + f(b);
  for (let k = 1; k < n; k++) sum += (k % 2 === 1 ? 4 : 2) * f(a + k * h);
  return (sum * h) / 3;
}

/** Roots of f on [a, b], bracketed on a fine grid and bisected. */
function roots(f: (z: number) => number, a: number, b: number): number[] {
  const out: number[] = [];
  const n = 20000;
  for (let k = 0; k < n; k++) {
    let lo = a + ((b - a) * k) / n;
    let hi = a + ((b - a) * (k + 1)) / n;
    if (f(lo) > 0 === f(hi) > 0) continue;
    for (let r = 0; r < 80; r++) {
      const mid = 0.5 * (lo + hi);
      if (f(mid) > 0 === f(lo) > 0) lo = mid;
      else hi = mid;
    }
    out.push(0.5 * (lo + hi));
  }
  return out;
}

describe('layer stack of two implants without anneal, against the exact Gaussians', () => {
  // An arsenic layer over a deeper boron layer in n-type silicon (invented scenario): n+, p, n.
  const substrate = 1e15;
  const arsenic = { doseCm2: 1e15, projectedRangeUm: 0.05, straggleUm: 0.02 };
  const boron = { doseCm2: 1e14, projectedRangeUm: 0.3, straggleUm: 0.08 };
  const run = solve({
    title: 'test: arsenic over boron, implants only (invented)',
    substrate: { dopant: 'P', concentrationCm3: substrate },
    crossSection: { widthUm: 24, depthUm: 1.2 },
    mask: { windows: [[2, 22]] },
    mesh: { refine: 2 },
    steps: [
      { kind: 'implant', dopant: 'B', ...boron },
      { kind: 'implant', dopant: 'As', ...arsenic },
    ],
  });
  const w = run.report.windows[0];
  const as = gaussian(arsenic.doseCm2, arsenic.projectedRangeUm, arsenic.straggleUm);
  const b = gaussian(boron.doseCm2, boron.projectedRangeUm, boron.straggleUm);
  const net = (z: number) => as(z) + substrate - b(z);
  const junctions = roots(net, 0, 1.2);
  const sheet = (top: number, bottom: number, fit: (typeof MOBILITY_FITS)[keyof typeof MOBILITY_FITS]) =>
    1 / (simpson((z) => conductivitySPerCm(net(z), as(z) + substrate + b(z), fit), top, bottom) * UM_TO_CM);
  const expected = [
    { type: 'n', top: 0, bottom: junctions[0], rs: sheet(0, junctions[0], MOBILITY_FITS.arsenic), fit: 'arsenic' },
    { type: 'p', top: junctions[0], bottom: junctions[1], rs: sheet(junctions[0], junctions[1], MOBILITY_FITS.boron), fit: 'boron' },
  ];

  it('has the two layers the exact profiles have, each of its type and with its own mobility fit', () => {
    expect(junctions).toHaveLength(2);
    expect(w.layerStack!.map((l) => [l.type, l.mobilityFit])).toEqual(expected.map((l) => [l.type, l.fit]));
  });

  it('bounds each layer at the exact junctions (0.5 %) and gives each its sheet resistance by quadrature of the exact profiles (1 %)', () => {
    for (const [k, layer] of w.layerStack!.entries()) {
      const e = expected[k];
      console.log(`layer ${k + 1} (${layer.type}): ${layer.topUm.toFixed(4)}–${layer.bottomUm.toFixed(4)} µm, Rs ${layer.sheetResistanceOhmSq!.toPrecision(5)} Ω/sq; ` +
        `exact ${e.top.toFixed(4)}–${e.bottom.toFixed(4)} µm, Rs ${e.rs.toPrecision(5)} Ω/sq`);
      expect(Math.abs(layer.bottomUm - e.bottom)).toBeLessThan(5e-3 * e.bottom);
      if (k > 0) expect(Math.abs(layer.topUm - e.top)).toBeLessThan(5e-3 * e.top);
      expect(Math.abs(layer.sheetResistanceOhmSq! / e.rs - 1)).toBeLessThan(0.01);
    }
  });

  it('the surface layer\'s sheet resistance is the window\'s own, and the report passes the strict schema', () => {
    expect(w.sheetResistanceOhmSq).toBe(w.layerStack![0].sheetResistanceOhmSq);
    expect(run.report.mobility!.fit).toBe('arsenic');
    expect(() => reportSchema.parse(run.report)).not.toThrow();
  });
});

describe('source/drain layers of the substrate\'s type in a well', () => {
  // Arsenic source/drain windows in a boron well in n-type silicon (invented scenario): the
  // surface layers are n, as the substrate is, and isolated from it by the well.
  const run = solve({
    title: 'test: arsenic source/drain in a boron well (invented)',
    substrate: { dopant: 'P', concentrationCm3: 5e15 },
    crossSection: { widthUm: 40 },
    mask: { windows: [[4, 18], [20, 36]] },
    mesh: { refine: 0.5 },
    steps: [
      { kind: 'implant', dopant: 'B', doseCm2: 3e13, projectedRangeUm: 0.15, straggleUm: 0.05 },
      { kind: 'drive-in', temperatureC: 1100, minutes: 60 },
      { kind: 'implant', dopant: 'As', doseCm2: 3e15, projectedRangeUm: 0.04, straggleUm: 0.015 },
      { kind: 'anneal', temperatureC: 950, minutes: 20 },
    ],
  });
  const [left, right] = run.report.windows;
  const [pair] = run.report.spacings!;

  it('reports the n+ layer, then the well, below each window', () => {
    for (const w of [left, right]) {
      expect(w.layerStack!.map((l) => l.type)).toEqual(['n', 'p']);
      expect(w.layerStack![0].bottomUm).toBe(w.junctionDepthUm);
      expect(w.sheetResistanceOhmSq).toBeGreaterThan(0);
    }
  });

  it('a long line of it carries Rs/W within a few % for a 16 µm window (definition of sheet resistance)', () => {
    const ratio = (right.lineResistanceOhmPerUm! * 16) / right.sheetResistanceOhmSq!;
    console.log(`source/drain: R'·W/Rs = ${ratio.toFixed(4)}, W eff ${right.effectiveWidthUm} µm`);
    expect(ratio).toBeLessThan(1);
    expect(ratio).toBeGreaterThan(0.97);
  });

  it('the two layers are not merged: their gap is the stripe less both lateral reaches (definition of lateral encroachment)', () => {
    expect(pair.merged).toBe(false);
    const gap = pair.stripeUm - left.lateralRightUm! - right.lateralLeftUm!;
    console.log(`source/drain gap at the surface ${pair.surfaceGapUm} µm, stripe − laterals ${gap.toFixed(6)} µm`);
    expect(Math.abs(pair.surfaceGapUm! - gap)).toBeLessThan(1e-5);
    expect(pair.minimumGapUm!).toBeLessThanOrEqual(pair.surfaceGapUm! + 1e-9);
    expect(pair.minimumGapUm!).toBeGreaterThan(0);
  });
});

describe('a surface layer of the substrate\'s type with no junction below it', () => {
  // Phosphorus into n-type silicon (invented scenario): no junction, so no layer of its own.
  const run = solve({
    title: 'test: phosphorus into n-type (invented)',
    substrate: { dopant: 'P', concentrationCm3: 1e15 },
    crossSection: { widthUm: 10 },
    mask: { windows: [[1, 4], [6, 9]] },
    mesh: { refine: 0.5 },
    steps: [{ kind: 'predeposition', dopant: 'P', surfaceConcentrationCm3: 1e19, temperatureC: 1000, minutes: 20 }],
  });

  it('reports no layer, no resistance and no gap (common practice: an unisolated layer is no resistor)', () => {
    for (const w of run.report.windows) {
      expect(w.layerStack).toEqual([]);
      expect(w.sheetResistanceOhmSq).toBeNull();
      expect(w.lineResistanceOhmPerUm).toBeNull();
    }
    expect(run.report.spacings![0].surfaceGapUm).toBeNull();
    expect(run.report.spacings![0].merged).toBe(false);
  });
});
