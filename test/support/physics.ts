/**
 * The dopant-physics formulas of REFERENCES.md written out independently of the solver,
 * for the tests to compare against.
 */
import { K_B_EV } from './closed-forms.ts';

/** ni = 3.87e16·T^1.5·exp(−0.605 eV/kT), cm^-3 (Plummer, Deal & Griffin 2000; from memory). */
export function niRef(temperatureC: number): number {
  const t = temperatureC + 273.15;
  return 3.87e16 * t ** 1.5 * Math.exp(-0.605 / (K_B_EV * t));
}

/** n from neutrality n − ni²/n = N: n = N/2 + √((N/2)² + ni²). */
export function electronsRef(net: number, ni: number): number {
  return net / 2 + Math.sqrt((net / 2) ** 2 + ni * ni);
}

/** D0·exp(−Ea/kT), cm²/s. */
export function arrheniusCm2(d0: number, ea: number, temperatureC: number): number {
  return d0 * Math.exp(-ea / (K_B_EV * (temperatureC + 273.15)));
}

/**
 * Fair's charge-state terms as recalled in REFERENCES.md (from memory; check against the
 * table in Plummer, Deal & Griffin (2000) ch. 7), cm²/s and eV.
 */
export const FAIR_TERMS: Record<string, [number, number][]> = {
  B: [[0.037, 3.46], [0.72, 3.46]],
  P: [[3.85, 3.66], [4.44, 4.0], [44.2, 4.37]],
  As: [[0.066, 3.44], [12.0, 4.05]],
  Sb: [[0.214, 3.65], [15.0, 4.08]],
};
