import { describe, expect, it } from 'vitest';
import { BUILTIN_DOPANTS, intrinsicDiffusivityCm2PerS } from '../../packages/solver2d/src/index.ts';
import { carriers, fieldEnhancement, intrinsicCarriersCm3 } from '../../packages/solver2d/src/intrinsic.ts';
import { diffusivityAt } from '../../packages/solver2d/src/dopants.ts';
import { solidSolubilityCm3 } from '../../packages/solver2d/src/solubility.ts';
import { arrheniusCm2, electronsRef, FAIR_TERMS, niRef } from '../support/physics.ts';

describe('dopant table and intrinsic carriers', () => {
  for (const name of ['B', 'P', 'As', 'Sb']) {
    for (const t of [900, 1000, 1100]) {
      it(`${name} intrinsic D at ${t} °C is the sum of Fair's charge-state terms (REFERENCES.md, from memory) to 1e-12`, () => {
        const expected = FAIR_TERMS[name].reduce((sum, [d0, ea]) => sum + arrheniusCm2(d0, ea, t), 0);
        expect(Math.abs(intrinsicDiffusivityCm2PerS(BUILTIN_DOPANTS[name], t) / expected - 1)).toBeLessThan(1e-12);
      });
    }
  }

  it('boron at 1000 °C diffuses at about 1.5e-14 cm²/s (textbook value, from memory; ±20 %)', () => {
    const d = intrinsicDiffusivityCm2PerS(BUILTIN_DOPANTS.B, 1000);
    expect(d).toBeGreaterThan(1.2e-14);
    expect(d).toBeLessThan(1.8e-14);
  });

  it('ni at 1000 °C is about 7e18 cm^-3 (Plummer, Deal & Griffin; from memory, ±5 %)', () => {
    expect(Math.abs(intrinsicCarriersCm3(1000) / 7e18 - 1)).toBeLessThan(0.05);
    expect(Math.abs(intrinsicCarriersCm3(1100) / niRef(1100) - 1)).toBeLessThan(1e-12);
  });

  it('carriers from neutrality satisfy n·p = ni² and n − p = N_D − N_A (to 1e-12 relative)', () => {
    const ni = intrinsicCarriersCm3(1050);
    for (const net of [-3e20, -1e19, -1e16, 0, 2e15, 5e18, 1e21]) {
      const { n, p } = carriers(net, ni);
      expect(Math.abs((n * p) / (ni * ni) - 1)).toBeLessThan(1e-12);
      expect(Math.abs(n - p - net)).toBeLessThanOrEqual(1e-12 * Math.max(Math.abs(net), ni));
      expect(Math.abs(n / electronsRef(net, ni) - 1)).toBeLessThan(1e-9);
    }
  });

  it('field enhancement runs from 1 (intrinsic) to 2 (extrinsic) (common practice)', () => {
    const ni = 1e19;
    expect(fieldEnhancement(0, ni)).toBe(1);
    expect(fieldEnhancement(1e23, ni)).toBeCloseTo(2, 6);
  });

  it('charged-defect D of arsenic at n = 10·ni follows D⁰ + D⁻·(n/ni), doubled by the field (Fair 1981)', () => {
    const t = 1000;
    const ni = niRef(t);
    const net = 10 * ni;
    const r = electronsRef(net, ni) / ni;
    const [neutral, single] = FAIR_TERMS.As;
    const h = 1 + net / Math.sqrt(net * net + 4 * ni * ni);
    const expected = (arrheniusCm2(...neutral, t) + arrheniusCm2(...single, t) * r) * h * 1e8;
    expect(Math.abs(diffusivityAt(BUILTIN_DOPANTS.As, t, net, true) / expected - 1)).toBeLessThan(1e-9);
  });

  it('solid solubility is tabulated with its source and refuses temperatures outside its table', () => {
    // Trumbore (1960), values from memory: boron about 2e20 cm^-3 near 1000 °C (±30 %).
    const b = solidSolubilityCm3('B', 1000) as number;
    expect(b).toBeGreaterThan(1.4e20);
    expect(b).toBeLessThan(2.6e20);
    expect(typeof solidSolubilityCm3('B', 1300)).toBe('string');
  });
});
