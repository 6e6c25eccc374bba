import { describe, expect, it } from 'vitest';
import { MOBILITY_FITS, mobilityCm2PerVs, resistivityOhmCm } from '../../packages/solver2d/src/mobility.ts';
import { sheetConductanceS } from '../../packages/solver2d/src/resistance.ts';
import { erfc, erfcinv } from '../support/closed-forms.ts';
import { integrate } from '../support/engineering-forms.ts';

/**
 * ASTM F723-99, "Conversion between resistivity and dopant density for boron-doped,
 * phosphorus-doped and arsenic-doped silicon" (Thurber et al., NBS Special Publication
 * 400-64), dopant density → resistivity at 23 °C. The equations and coefficients are
 * recalled from memory:
 *   boron:      ρ = 1.305e16/N + 1.133e17 / (N·[1 + (2.58e-19·N)^−0.737])
 *   phosphorus: ρ = (6.242e18/N)·10^Z, Z = (A0 + A1y + A2y² + A3y³)/(1 + B1y + B2y² + B3y³),
 *               y = log10 N − 16, A = −3.0769, 2.2108, −0.62272, 0.057501,
 *               B = −0.68157, 0.19833, −0.018376.
 * They give (from memory, and as remembered from the standard's tables) B 1e16 ≈ 1.44 Ω·cm
 * and P 1e16 ≈ 0.52 Ω·cm, close to the REFERENCES.md points (1.4 and 0.5).
 */
function astmBoron(n: number): number {
  return 1.305e16 / n + 1.133e17 / (n * (1 + (2.58e-19 * n) ** -0.737));
}
function astmPhosphorus(n: number): number {
  const y = Math.log10(n) - 16;
  const z = (-3.0769 + 2.2108 * y - 0.62272 * y * y + 0.057501 * y ** 3) / (1 - 0.68157 * y + 0.19833 * y * y - 0.018376 * y ** 3);
  return (6.242e18 / n) * 10 ** z;
}

describe('resistivity of silicon from the Masetti mobility model against ASTM F723', () => {
  for (const n of [1e15, 1e16, 1e17, 1e18]) {
    it(`phosphorus ${n.toExponential(0)} cm^-3 within 10 %`, () => {
      const rho = resistivityOhmCm(n, MOBILITY_FITS.phosphorus);
      console.log(`P ${n.toExponential(0)}: ${rho.toPrecision(4)} Ω·cm, ASTM F723 ${astmPhosphorus(n).toPrecision(4)}`);
      expect(Math.abs(rho / astmPhosphorus(n) - 1)).toBeLessThan(0.1);
    });
  }
  for (const n of [1e15, 1e16, 1e17]) {
    it(`boron ${n.toExponential(0)} cm^-3 within 10 %`, () => {
      const rho = resistivityOhmCm(n, MOBILITY_FITS.boron);
      console.log(`B ${n.toExponential(0)}: ${rho.toPrecision(4)} Ω·cm, ASTM F723 ${astmBoron(n).toPrecision(4)}`);
      expect(Math.abs(rho / astmBoron(n) - 1)).toBeLessThan(0.1);
    });
  }
  it('boron 1e18 cm^-3 within 12 %, and low: every boron atom counted as ionised', () => {
    // Masetti's boron fit is against hole density; F723 is against boron density, and near
    // 1e18 cm^-3 part of the boron is not ionised at 23 °C (about a sixth, from memory), so a
    // model that counts every atom reads the resistivity low by about that much.
    const rho = resistivityOhmCm(1e18, MOBILITY_FITS.boron);
    console.log(`B 1e18: ${rho.toPrecision(4)} Ω·cm, ASTM F723 ${astmBoron(1e18).toPrecision(4)}`);
    expect(rho).toBeLessThan(astmBoron(1e18));
    expect(Math.abs(rho / astmBoron(1e18) - 1)).toBeLessThan(0.12);
  });

  it('mobility tends to the lattice value μmax in pure silicon and falls monotonically with doping (Masetti 1983)', () => {
    for (const fit of Object.values(MOBILITY_FITS)) {
      expect(Math.abs(mobilityCm2PerVs(1e10, fit) / fit.muMax - 1)).toBeLessThan(1e-3);
      let prev = Infinity;
      for (let e = 12; e <= 21; e += 0.25) {
        const mu = mobilityCm2PerVs(10 ** e, fit);
        expect(mu).toBeGreaterThan(0);
        expect(mu).toBeLessThan(prev);
        prev = mu;
      }
    }
    expect(Number.isFinite(mobilityCm2PerVs(0, MOBILITY_FITS.boron))).toBe(true);
    expect(Number.isFinite(mobilityCm2PerVs(0, MOBILITY_FITS.phosphorus))).toBe(true);
  });
});

describe('sheet resistance of a column profile', () => {
  it('a uniform layer of thickness t has Rs = ρ/t (definition of sheet resistance)', () => {
    for (const [n, t] of [[1e17, 0.5], [3e18, 2.0], [1e16, 0.3]] as const) {
      // An uneven mesh that ends the layer exactly on a node, then continues in the substrate.
      const z = [0, 0.01, 0.05, 0.12, 0.2, 0.35, 0.6, 0.9, 1.0].map((f) => f * t);
      z.push(1.2 * t, 1.5 * t);
      const donors = z.map((d) => (d <= t ? n : 0));
      const acceptors = z.map(() => 1e10);
      const rs = 1 / sheetConductanceS(donors, acceptors, z, t, MOBILITY_FITS.phosphorus);
      const expected = resistivityOhmCm(n, MOBILITY_FITS.phosphorus) / (t * 1e-4);
      expect(Math.abs(rs / expected - 1)).toBeLessThan(1e-4);
    }
  });

  it('an erfc profile: the trapezoids on a graded mesh match Gauss–Legendre quadrature of the closed form within 0.1 %', () => {
    // C = Cs·erfc(z/2√(Dt)) in a background NB (REFERENCES.md), junction at 2√(Dt)·erfc⁻¹(NB/Cs).
    const cs = 1e20, nb = 1e16, dt = 0.05;
    const xj = 2 * Math.sqrt(dt) * erfcinv(nb / cs);
    const z: number[] = [0];
    for (let h = xj / 400; z[z.length - 1] < 1.5 * xj; h *= 1.02) z.push(z[z.length - 1] + h);
    const acceptors = z.map((d) => cs * erfc(d / (2 * Math.sqrt(dt))));
    const donors = z.map(() => nb);
    const fit = MOBILITY_FITS.boron;
    const numeric = sheetConductanceS(donors, acceptors, z, xj, fit);
    const sigma = (d: number) => {
      const na = cs * erfc(d / (2 * Math.sqrt(dt)));
      return 1.602176634e-19 * mobilityCm2PerVs(na + nb, fit) * Math.abs(na - nb);
    };
    const reference = integrate(sigma, 0, xj, 2000) * 1e-4;
    console.log(`erfc layer: Rs ${(1 / numeric).toFixed(3)} Ω/sq, quadrature ${(1 / reference).toFixed(3)} Ω/sq (${z.length} nodes)`);
    expect(Math.abs(numeric / reference - 1)).toBeLessThan(1e-3);
  });
});
