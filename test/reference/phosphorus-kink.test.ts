import { describe, expect, it } from 'vitest';
import { BUILTIN_DOPANTS } from '../../packages/solver2d/src/dopants.ts';
import { kinkElectronsCm3, tailDiffusivityCm2PerS, tailFactor } from '../../packages/solver2d/src/phosphorus-kink.ts';
import { K_B_EV } from '../support/closed-forms.ts';
import { arrheniusCm2, FAIR_TERMS, niRef } from '../support/physics.ts';

/** Fair and Tsai, J. Electrochem. Soc. 124 (1977) 1107, written out again (from memory). */
function neRef(temperatureC: number): number {
  return 4.65e21 * Math.exp(-0.39 / (K_B_EV * (temperatureC + 273.15)));
}

describe('Fair–Tsai closed-form pieces', () => {
  it('n_e(T) is about 1e20 cm^-3 near 900–1000 °C (Fair and Tsai 1977, as the issue recalls it; from memory)', () => {
    for (const t of [900, 950, 1000]) {
      expect(kinkElectronsCm3(t)).toBeGreaterThan(0.8e20);
      expect(kinkElectronsCm3(t)).toBeLessThan(1.5e20);
    }
  });

  it('n_e(T) = 4.65e21·exp(−0.39 eV/kT) at 850, 950 and 1050 °C to 1e-12 (Fair and Tsai 1977; from memory)', () => {
    for (const t of [850, 950, 1050]) expect(Math.abs(kinkElectronsCm3(t) / neRef(t) - 1)).toBeLessThan(1e-12);
  });

  it('tail D = D⁰ + D⁻·n_s³/(n_e²·ni)·[1 + exp(0.3 eV/kT)] to 1e-12 (Fair and Tsai 1977; from memory)', () => {
    const [[n0, e0], [n1, e1]] = FAIR_TERMS.P;
    for (const [t, ns] of [[850, 3e20], [900, 4e20], [1000, 6e20]] as const) {
      const kt = K_B_EV * (t + 273.15);
      const expected = arrheniusCm2(n0, e0, t) + arrheniusCm2(n1, e1, t) * (ns ** 3 / (neRef(t) ** 2 * niRef(t))) * (1 + Math.exp(0.3 / kt));
      expect(Math.abs(tailDiffusivityCm2PerS(BUILTIN_DOPANTS.P, t, ns)! / expected - 1)).toBeLessThan(1e-12);
    }
  });

  it('no kink and no tail enhancement where the surface stays below n_e (Fair and Tsai 1977)', () => {
    expect(tailFactor(900, 0.99 * neRef(900))).toBe(0);
    expect(tailDiffusivityCm2PerS(BUILTIN_DOPANTS.P, 900, 5e19)).toBeNull();
  });

  it('the tail of a solubility-level source diffuses tens of times faster than intrinsic phosphorus at 900 °C (Fair and Tsai 1977: the emitter tail; from memory)', () => {
    const intrinsic = FAIR_TERMS.P.reduce((sum, [d0, ea]) => sum + arrheniusCm2(d0, ea, 900), 0);
    const ratio = tailDiffusivityCm2PerS(BUILTIN_DOPANTS.P, 900, 3e20)! / intrinsic;
    expect(ratio).toBeGreaterThan(10);
    expect(ratio).toBeLessThan(1e4);
  });
});
