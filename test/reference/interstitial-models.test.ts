import { describe, expect, it } from 'vitest';
import { besselK0, oxidationSpread, spreadIntegral } from '../../packages/solver2d/src/interstitial-spread.ts';
import {
  diffusivityFactor, INTERSTITIAL_FRACTION, interstitialTransportPerCmS, OED_COEFFICIENT, OED_EXPONENT, oedSurfaceExcess,
  tedExcess, tedInterval, tedLifetimeS, tedPoolPerCm,
} from '../../packages/solver2d/src/interstitials.ts';
import { dealGroveConstants, oxidationRateUmPerS, oxideAfterUm } from '../../packages/solver2d/src/oxidation.ts';

const K_EV = 8.617333262e-5;

describe('Deal–Grove oxidation (Deal & Grove, J. Appl. Phys. 36 (1965) 3770)', () => {
  // Published constants (Plummer, Deal & Griffin 2000, Table 6-2; (100): B/A of (111) / 1.68),
  // written out here rather than read from the module.
  const published = {
    'dry-oxygen': { C1: 772, E1: 1.23, C2: 6.23e6 / 1.68, E2: 2.0 },
    steam: { C1: 386, E1: 0.78, C2: 1.63e8 / 1.68, E2: 2.05 },
  } as const;
  // Deal and Grove's own solution: x = (A/2)·(√(1 + (t + τ)/(A²/4B)) − 1), τ = (x₀² + A·x₀)/B.
  const closedForm = (ambient: keyof typeof published, temperatureC: number, hours: number, x0: number) => {
    const p = published[ambient];
    const kT = K_EV * (temperatureC + 273.15);
    const B = p.C1 * Math.exp(-p.E1 / kT);
    const A = B / (p.C2 * Math.exp(-p.E2 / kT));
    const tau = (x0 * x0 + A * x0) / B;
    return (A / 2) * (Math.sqrt(1 + (hours + tau) / ((A * A) / (4 * B))) - 1);
  };

  for (const [ambient, temperatureC, hours, x0] of [
    ['steam', 1000, 1, 0], ['steam', 1100, 0.5, 0], ['dry-oxygen', 1000, 2, 0.025], ['dry-oxygen', 1100, 1, 0.025],
  ] as const) {
    it(`${ambient} at ${temperatureC} °C for ${hours} h from ${x0} µm matches the closed form to 1e-12`, () => {
      const x = oxideAfterUm(ambient, temperatureC, hours * 3600, x0);
      expect(Math.abs(x / closedForm(ambient, temperatureC, hours, x0) - 1)).toBeLessThan(1e-12);
    });
  }

  it('lands where oxide charts put it: steam 1000 °C 1 h ≈ 0.39 µm, dry 1100 °C 1 h ≈ 0.11 µm (common practice, ±15 %)', () => {
    expect(oxideAfterUm('steam', 1000, 3600, 0)).toBeGreaterThan(0.39 * 0.85);
    expect(oxideAfterUm('steam', 1000, 3600, 0)).toBeLessThan(0.39 * 1.15);
    expect(oxideAfterUm('dry-oxygen', 1100, 3600, 0.025)).toBeGreaterThan(0.11 * 0.85);
    expect(oxideAfterUm('dry-oxygen', 1100, 3600, 0.025)).toBeLessThan(0.11 * 1.15);
  });

  it('the rate is dx/dt of the thickness (central difference, 1e-6)', () => {
    for (const ambient of ['steam', 'dry-oxygen'] as const) {
      const t = 1800;
      const h = 1;
      const slope = (oxideAfterUm(ambient, 1050, t + h, 0) - oxideAfterUm(ambient, 1050, t - h, 0)) / (2 * h);
      const rate = oxidationRateUmPerS(ambient, 1050, oxideAfterUm(ambient, 1050, t, 0));
      expect(Math.abs(rate / slope - 1)).toBeLessThan(1e-6);
    }
  });

  it('an inert ambient grows nothing', () => {
    expect(oxideAfterUm('inert', 1100, 3600, 0.1)).toBe(0.1);
    expect(oxidationRateUmPerS('inert', 1100, 0)).toBe(0);
    expect(dealGroveConstants('steam', 1000).aUm).toBeGreaterThan(0);
  });
});

describe('interstitial supersaturation: D_eff = D·(f_I·S + (1 − f_I)/S) (C_I·C_V = C_I*·C_V*)', () => {
  it('is D at S = 1 for every species, enhances B and P, retards Sb at S = 3 (Ural, Griffin & Plummer 1999)', () => {
    for (const f of Object.values(INTERSTITIAL_FRACTION)) expect(diffusivityFactor(f, 1)).toBe(1);
    expect(diffusivityFactor(INTERSTITIAL_FRACTION.B, 3)).toBe(3);
    expect(diffusivityFactor(INTERSTITIAL_FRACTION.P, 3)).toBe(3);
    expect(diffusivityFactor(INTERSTITIAL_FRACTION.Sb, 3)).toBeCloseTo(0.02 * 3 + 0.98 / 3, 14);
    expect(diffusivityFactor(INTERSTITIAL_FRACTION.Sb, 3)).toBeLessThan(0.5);
  });

  it('OED: S_s − 1 = K·(dx/dt)^0.5 (Lever, Griffin & Rausch 1995): quadrupling the rate doubles the excess', () => {
    expect(OED_EXPONENT).toBe(0.5);
    expect(oedSurfaceExcess(4e-5) / oedSurfaceExcess(1e-5)).toBeCloseTo(2, 12);
    expect(oedSurfaceExcess(0)).toBe(0);
    // The calibration point (from memory): boron D doubles after 60 min of dry O₂ at 1100 °C.
    const rate = oxidationRateUmPerS('dry-oxygen', 1100, oxideAfterUm('dry-oxygen', 1100, 3600, 0.025));
    expect(OED_COEFFICIENT * Math.sqrt(rate)).toBeCloseTo(1, 12);
  });
});

describe('TED "+1" supersaturation and its decay (Giles 1991; lifetime of Eaglesham et al. 1994)', () => {
  const pool = tedPoolPerCm(1e14, 0.1);

  it('pool = dose × Rp: 1e14 cm⁻² at 0.1 µm is 1e9 cm⁻¹', () => {
    expect(pool).toBeCloseTo(1e9, 0);
  });

  it('the lifetime has the 3.8 eV activation: τ(800)/τ(1000) = exp(3.8·(1/kT₈₀₀ − 1/kT₁₀₀₀))', () => {
    const expected = Math.exp(3.8 * (1 / (K_EV * 1073.15) - 1 / (K_EV * 1273.15)));
    expect(tedLifetimeS(800) / tedLifetimeS(1000)).toBeCloseTo(expected, 9);
    expect(tedLifetimeS(1000)).toBe(3);
  });

  it('S − 1 decays as exp(−t/τ): ∫ over a step equals quadrature of M₀·exp(−t/τ)/(τ·D_I·C_I*) to 1e-9', () => {
    const out = new Float64Array(2);
    for (const T of [750, 800, 900, 1000]) {
      const tau = tedLifetimeS(T);
      const seconds = 1.7 * tau;
      tedInterval(pool, T, seconds, out);
      // Composite Simpson on 2000 intervals of the closed-form decay.
      const n = 2000;
      const f = (t: number) => tedExcess(pool, T) * Math.exp(-t / tau);
      let s = f(0) + f(seconds);
      for (let k = 1; k < n; k++) s += (k % 2 ? 4 : 2) * f((k * seconds) / n);
      const quad = (s * seconds) / (3 * n);
      expect(Math.abs(out[0] / quad - 1)).toBeLessThan(1e-9);
      expect(Math.abs(out[1] / (pool * Math.exp(-seconds / tau)) - 1)).toBeLessThan(1e-12);
    }
  });

  it('splitting an interval changes nothing (the pool carries the history), and the whole transient is M₀/(D_I·C_I*)', () => {
    const a = tedInterval(pool, 850, 600, new Float64Array(2));
    const b = tedInterval(a[1], 850, 600, new Float64Array(2));
    const whole = tedInterval(pool, 850, 1200, new Float64Array(2));
    expect(Math.abs((a[0] + b[0]) / whole[0] - 1)).toBeLessThan(1e-12);
    const forever = tedInterval(pool, 850, 1e9, new Float64Array(2));
    expect(Math.abs(forever[0] / (pool / interstitialTransportPerCmS(850)) - 1)).toBeLessThan(1e-12);
  });

  it('the TED budget of boron is hundreds of times the equilibrium one at 800 °C for 30 min, under 1 % at 1100 °C for 60 min', () => {
    // Boron's intrinsic D (Fair's D⁰ + D⁺, from memory), cm²/s.
    const dB = (T: number) => (0.037 + 0.72) * Math.exp(-3.46 / (K_EV * (T + 273.15)));
    const ratio = (T: number, minutes: number) =>
      (dB(T) * tedInterval(pool, T, minutes * 60, new Float64Array(2))[0]) / (dB(T) * minutes * 60);
    expect(ratio(800, 30)).toBeGreaterThan(100);
    expect(ratio(1100, 60)).toBeLessThan(0.01);
  });
});

describe('interstitial spread from oxidising windows: L²∇²u = u, flux through windows only', () => {
  it('K₀ matches its integral representation ∫₀^∞ exp(−x·cosh t) dt (A&S 9.6.24) to 2e-7', () => {
    for (const x of [0.01, 0.1, 0.5, 1, 1.9, 2.1, 3, 6, 12]) {
      const n = 20000;
      const top = Math.acosh(50 / x + 1);
      let s = 0;
      for (let k = 0; k <= n; k++) {
        const t = (k * top) / n;
        s += (k === 0 || k === n ? 0.5 : 1) * Math.exp(-x * Math.cosh(t));
      }
      const reference = (s * top) / n;
      expect(Math.abs(besselK0(x) / reference - 1)).toBeLessThan(2e-7);
    }
  });

  it('a window over the whole section gives u_s·exp(−z/L) (∫K₀(√(s²+z²)) ds = π·exp(−z)) to 1e-5', () => {
    const x = [0.5, 5, 12, 23.5];
    const z = [0, 0.3, 2, 10, 25];
    const u = oxidationSpread(x, z, [[0, 24]], 24, 10);
    z.forEach((zz, j) => x.forEach((_, i) => expect(Math.abs(u[j * x.length + i] - Math.exp(-zz / 10))).toBeLessThan(1e-5)));
  });

  it('at a lone mask edge the surface value is half, and under the mask it falls as (1/π)∫_d^∞ K₀ (1e-4)', () => {
    // A 400 µm section with one window [0, 200]: the edge at 200 µm is 20 L from either wall image.
    const x = [150, 200, 202, 205, 210, 220, 230];
    const u = oxidationSpread(x, [0], [[0, 200]], 400, 10);
    expect(Math.abs(u[1] - 0.5)).toBeLessThan(1e-4);
    for (let i = 1; i < x.length; i++) {
      const d = (x[i] - 200) / 10;
      const expected = 0.5 - spreadIntegral(d, 0);
      expect(Math.abs(u[i] - expected)).toBeLessThan(1e-4);
      if (i > 1) expect(u[i]).toBeLessThan(u[i - 1]);
    }
    expect(u[0]).toBeGreaterThan(0.99);
  });

  it('the table-based field matches the direct integral at arbitrary nodes (2e-4, the table\'s interpolation)', () => {
    const x = [0.3, 3.7, 8, 8.4, 11.1, 15.9, 19.5];
    const z = [0, 0.05, 0.8, 4];
    const windows: [number, number][] = [[8, 16]];
    const u = oxidationSpread(x, z, windows, 24, 10);
    // Direct: sum over mirror images, enough copies for 30 L.
    z.forEach((zz, j) => x.forEach((xx, i) => {
      let direct = 0;
      for (let k = -3; k <= 3; k++) {
        for (const [a, b] of [[8 + 48 * k, 16 + 48 * k], [-16 + 48 * k, -8 + 48 * k]]) {
          direct += spreadIntegral((xx - a) / 10, zz / 10) - spreadIntegral((xx - b) / 10, zz / 10);
        }
      }
      expect(Math.abs(u[j * x.length + i] - direct)).toBeLessThan(2e-4);
    }));
  });
});
