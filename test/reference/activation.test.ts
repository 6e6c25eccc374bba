import { describe, expect, it } from 'vitest';
import { ACTIVATION_LAWS, activateField, activeConcentration, activeSlope } from '../../packages/solver2d/src/activation.ts';
import { solidSolubilityCm3 } from '../../packages/solver2d/src/solubility.ts';

/**
 * The cluster equilibrium C = n + m·K·n^m (M.Y. Tsai et al. 1980, textbook form; from memory),
 * solved again here by bisection on n with K = 1/(m·a_c^(m−1)).
 */
function activeRef(total: number, limit: number, m: number): number {
  const k = 1 / (m * limit ** (m - 1));
  let lo = 0;
  let hi = total;
  for (let it = 0; it < 200; it++) {
    const mid = 0.5 * (lo + hi);
    if (mid + m * k * mid ** m > total) hi = mid;
    else lo = mid;
  }
  return 0.5 * (lo + hi);
}

describe('active and inactive dopant (cluster equilibrium)', () => {
  for (const name of ['As', 'B']) {
    const law = ACTIVATION_LAWS[name];
    for (const t of [850, 950, 1050]) {
      it(`${name} at ${t} °C: active vs total follows C = n + m·K·n^m to 1e-10 from 1e17 to 3e21 cm^-3 (Tsai et al. 1980 form; solved by bisection)`, () => {
        const limit = law.limitCm3(t);
        for (let c = 1e17; c <= 3e21; c *= 1.7) {
          const a = activeConcentration(c, limit, law.clusterSize);
          expect(Math.abs(a / activeRef(c, limit, law.clusterSize) - 1)).toBeLessThan(1e-10);
          expect(a).toBeLessThanOrEqual(c);
        }
      });
    }
  }

  it('arsenic: active saturates at 2–4e20 cm^-3 for 1e21 total at 900–1000 °C (common practice, from memory)', () => {
    for (const t of [900, 1000]) {
      const a = activeConcentration(1e21, ACTIVATION_LAWS.As.limitCm3(t), 4);
      expect(a).toBeGreaterThan(2e20);
      expect(a).toBeLessThan(4.5e20);
    }
  });

  it('arsenic well below the limit is all active (1e18 cm^-3 at 1000 °C to 1e-6) (cluster form: mK·n^(m−1) ≪ 1)', () => {
    expect(1 - activeConcentration(1e18, ACTIVATION_LAWS.As.limitCm3(1000), 4) / 1e18).toBeLessThan(1e-6);
  });

  it('boron at ten times its solid solubility keeps no more than 1.3× the solubility active, at 900 and 1000 °C (Trumbore 1960 table; m = 12 is our choice)', () => {
    for (const t of [900, 1000]) {
      const css = solidSolubilityCm3('B', t) as number;
      const a = activeConcentration(10 * css, ACTIVATION_LAWS.B.limitCm3(t), ACTIVATION_LAWS.B.clusterSize);
      expect(Math.abs(ACTIVATION_LAWS.B.limitCm3(t) / css - 1)).toBeLessThan(1e-12);
      expect(a).toBeGreaterThan(css);
      expect(a).toBeLessThan(1.3 * css);
    }
  });

  it('∂a/∂C from activeSlope matches a centred difference of the solved curve to 1e-6', () => {
    const limit = ACTIVATION_LAWS.As.limitCm3(1000);
    for (const c of [1e20, 4e20, 2e21]) {
      const h = 1e-5 * c;
      const fd = (activeConcentration(c + h, limit, 4) - activeConcentration(c - h, limit, 4)) / (2 * h);
      expect(Math.abs(activeSlope(activeConcentration(c, limit, 4), limit, 4) / fd - 1)).toBeLessThan(1e-6);
    }
  });

  it('activateField gives the scalar solve at every node, and 0 for a negative total', () => {
    const total = Float64Array.of(-1e3, 0, 1e15, 3e19, 2e20, 8e20, 5e21);
    const active = new Float64Array(total.length);
    const slope = new Float64Array(total.length);
    const limit = ACTIVATION_LAWS.B.limitCm3(900);
    activateField(active, slope, total, limit, 12);
    expect(active[0]).toBe(0);
    for (let k = 1; k < total.length; k++) {
      expect(active[k]).toBe(activeConcentration(total[k], limit, 12));
      expect(slope[k]).toBeCloseTo(activeSlope(active[k], limit, 12), 12);
    }
  });
});
