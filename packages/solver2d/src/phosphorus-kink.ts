import { arrheniusCm2PerS, type Dopant } from './dopants.ts';
import { intrinsicCarriersCm3 } from './intrinsic.ts';
import { thermalEnergyEv } from './units.ts';

/**
 * Phosphorus at high concentration: the three-region model of R.B. Fair and J.C.C. Tsai,
 * J. Electrochem. Soc. 124 (1977) 1107 (as recalled and as tabulated in Plummer, Deal &
 * Griffin, Silicon VLSI Technology (2000) ch. 7; the expressions and constants below are
 * from memory: the search of public texts did not turn them up).
 *
 * - Surface region, n above n_e(T): phosphorus pairs with doubly charged vacancies and
 *   moves by the D⁼(n/ni)² term (the charged-defect model of dopants.ts holds there).
 * - Kink, at the electron concentration n_e(T) = 4.65e21·exp(−0.39 eV/kT) cm⁻³ where the
 *   Fermi level falls to the acceptor level of the doubly charged vacancy (0.11 eV below the
 *   conduction band) and the pairs come apart, releasing point defects.
 * - Tail, n below n_e: the excess point defects released at the kink make the tail diffuse
 *   at D_tail = D⁰ + D⁻·(n_s³ / (n_e²·ni))·[1 + exp(0.3 eV/kT)], uniform through the tail,
 *   with n_s the electron concentration at the surface (here: at the highest phosphorus
 *   concentration in the silicon, after the pairing of the surface region, see
 *   surfaceElectronsCm3).
 *
 * The tail enhancement is a point-defect supersaturation of its own, named for its authors
 * and separate from the implant (TED) and oxidation (OED) enhancements.
 */
export const FAIR_TSAI_SOURCE =
  'R.B. Fair and J.C.C. Tsai, J. Electrochem. Soc. 124 (1977) 1107; Plummer, Deal & Griffin (2000) ch. 7 (constants from memory)';

/** n_e(T) = KINK_PREFACTOR·exp(−KINK_ENERGY_EV/kT), cm⁻³ (Fair and Tsai 1977; from memory). */
export const KINK_PREFACTOR_CM3 = 4.65e21;
export const KINK_ENERGY_EV = 0.39;
/** The vacancy-pair dissociation term exp(0.3 eV/kT) of the tail (Fair and Tsai 1977; from memory). */
export const TAIL_ENERGY_EV = 0.3;

/**
 * In the surface region part of the phosphorus is paired with vacancies, and the electron
 * concentration n_s at a total C_s follows C_s = n_s + 2.04e-41·n_s³ (cm⁻³; Fair and Tsai
 * 1977, from memory): about 2.3e20 at the 4.8e20 solubility of 850 °C.
 */
export const PAIRED_COEFFICIENT = 2.04e-41;

/** n_s at a total phosphorus concentration C_s (the root of n + 2.04e-41·n³ = C_s), cm⁻³. */
export function surfaceElectronsCm3(totalCm3: number): number {
  if (!(totalCm3 > 0)) return 0;
  // Newton on the increasing, convex cubic from C_s, which lies above the root.
  let n = totalCm3;
  for (let it = 0; it < 60; it++) {
    const step = (n + PAIRED_COEFFICIENT * n * n * n - totalCm3) / (1 + 3 * PAIRED_COEFFICIENT * n * n);
    n -= step;
    if (Math.abs(step) <= 1e-14 * n) break;
  }
  return n;
}

/** Electron concentration at the kink, cm⁻³: about 1e20 near 900–1000 °C. */
export function kinkElectronsCm3(temperatureC: number): number {
  return KINK_PREFACTOR_CM3 * Math.exp(-KINK_ENERGY_EV / thermalEnergyEv(temperatureC));
}

/**
 * The tail's enhancement over D⁻ alone, (n_s³/(n_e²·ni))·[1 + exp(0.3 eV/kT)], for a surface
 * electron concentration n_s above n_e; 0 where there is no kink (n_s ≤ n_e).
 */
export function tailFactor(temperatureC: number, surfaceElectronsCm3: number): number {
  const ne = kinkElectronsCm3(temperatureC);
  if (!(surfaceElectronsCm3 > ne)) return 0;
  const ni = intrinsicCarriersCm3(temperatureC);
  return (surfaceElectronsCm3 ** 3 / (ne * ne * ni)) * (1 + Math.exp(TAIL_ENERGY_EV / thermalEnergyEv(temperatureC)));
}

/**
 * D_tail = D⁰ + D⁻·tailFactor, cm²/s, for phosphorus (its neutral and singly charged terms);
 * null where n_s ≤ n_e: no kink forms, and the charged-defect model holds everywhere.
 */
export function tailDiffusivityCm2PerS(dopant: Dopant, temperatureC: number, surfaceElectronsCm3: number): number | null {
  const f = tailFactor(temperatureC, surfaceElectronsCm3);
  if (f === 0) return null;
  const single = dopant.components.single ? arrheniusCm2PerS(dopant.components.single, temperatureC) : 0;
  return arrheniusCm2PerS(dopant.components.neutral, temperatureC) + single * f;
}
