import { thermalEnergyEv } from './units.ts';

/**
 * Thermal oxidation of (100) silicon by the linear–parabolic law of B.E. Deal and A.S. Grove,
 * J. Appl. Phys. 36 (1965) 3770: x² + A·x = B·(t + τ), τ = (x₀² + A·x₀)/B for an oxide x₀
 * already there, so that dx/dt = B/(2x + A). Here it only sets the oxidation rate that drives
 * the interstitial injection of oxidation-enhanced diffusion (see interstitials.ts): the oxide
 * consumes no silicon and moves no surface in this model.
 */

export const AMBIENTS = ['inert', 'dry-oxygen', 'steam'] as const;
export type Ambient = (typeof AMBIENTS)[number];

interface RateConstants {
  /** parabolic B = C₁·exp(−E₁/kT): µm²/h, eV */
  parabolicUm2PerH: number;
  parabolicEv: number;
  /** linear B/A = C₂·exp(−E₂/kT): µm/h, eV */
  linearUmPerH: number;
  linearEv: number;
}

/**
 * Deal & Grove's constants as tabulated in Plummer, Deal & Griffin, Silicon VLSI Technology
 * (2000), Table 6-2, at 1 atm (steam: 640 torr H₂O): the values for (111) silicon, with B/A
 * divided by 1.68 for (100) (dry C₂ 6.23e6 → 3.71e6 µm/h, steam 1.63e8 → 9.7e7 µm/h).
 * Confirmed against several public implementations that cite the same table.
 */
export const DEAL_GROVE: Readonly<Record<Exclude<Ambient, 'inert'>, RateConstants>> = {
  'dry-oxygen': { parabolicUm2PerH: 772, parabolicEv: 1.23, linearUmPerH: 6.23e6 / 1.68, linearEv: 2.0 },
  steam: { parabolicUm2PerH: 386, parabolicEv: 0.78, linearUmPerH: 1.63e8 / 1.68, linearEv: 2.05 },
};

export const DEAL_GROVE_SOURCE =
  'B.E. Deal and A.S. Grove, J. Appl. Phys. 36 (1965) 3770; constants of Plummer, Deal & Griffin (2000) Table 6-2, (100) silicon';

/**
 * The fast initial growth in dry oxygen that the linear–parabolic law does not describe: Deal
 * and Grove fitted their dry data with an initial oxide of 25 nm (x_i; from memory). A dry
 * oxidation of bare silicon starts from it; steam starts from bare silicon.
 */
export const DRY_INITIAL_OXIDE_UM = 0.025;

const SECONDS_PER_HOUR = 3600;

/** B (µm²/s) and A (µm) at a temperature. */
export function dealGroveConstants(ambient: Exclude<Ambient, 'inert'>, temperatureC: number): { bUm2PerS: number; aUm: number } {
  const c = DEAL_GROVE[ambient];
  const kT = thermalEnergyEv(temperatureC);
  const b = c.parabolicUm2PerH * Math.exp(-c.parabolicEv / kT);
  const bOverA = c.linearUmPerH * Math.exp(-c.linearEv / kT);
  return { bUm2PerS: b / SECONDS_PER_HOUR, aUm: b / bOverA };
}

/** The oxide a bare surface starts from in this ambient, µm. */
export function startingOxideUm(ambient: Ambient): number {
  return ambient === 'dry-oxygen' ? DRY_INITIAL_OXIDE_UM : 0;
}

/**
 * Oxide thickness after `seconds` at a fixed temperature from `initialUm`, µm: the positive
 * root of x² + A·x − B·(t + τ) = 0, written as 2c/(A + √(A² + 4c)) with c = B·(t + τ) so that
 * it keeps its digits when A² ≫ 4c (a thin oxide in the linear regime).
 */
export function oxideAfterUm(ambient: Ambient, temperatureC: number, seconds: number, initialUm: number): number {
  if (ambient === 'inert' || !(seconds > 0)) return initialUm;
  const { bUm2PerS, aUm } = dealGroveConstants(ambient, temperatureC);
  const c = initialUm * initialUm + aUm * initialUm + bUm2PerS * seconds;
  return (2 * c) / (aUm + Math.sqrt(aUm * aUm + 4 * c));
}

/** dx/dt = B/(2x + A) at an oxide thickness, µm/s (0 in an inert ambient). */
export function oxidationRateUmPerS(ambient: Ambient, temperatureC: number, oxideUm: number): number {
  if (ambient === 'inert') return 0;
  const { bUm2PerS, aUm } = dealGroveConstants(ambient, temperatureC);
  return bUm2PerS / (2 * oxideUm + aUm);
}
