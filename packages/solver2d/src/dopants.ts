import { electronsOverNi, fieldEnhancement, intrinsicCarriersCm3 } from './intrinsic.ts';
import { diffusivityToSolver, thermalEnergyEv } from './units.ts';

export type DopantType = 'donor' | 'acceptor';

/** One Arrhenius term D0·exp(−Ea/kT). */
export interface Arrhenius {
  D0Cm2PerS: number;
  EaEv: number;
}

/**
 * A diffusing species. `components` holds the charge-state terms of the diffusivity
 * (neutral, singly and doubly charged defect); their sum is the intrinsic diffusivity
 * (the value at n = p = ni). A user-defined species with a single Arrhenius law has one
 * neutral component.
 */
export interface Dopant {
  name: string;
  type: DopantType;
  components: { neutral: Arrhenius; single?: Arrhenius; double?: Arrhenius };
  source: string;
}

const FAIR =
  'R.B. Fair, in Impurity Doping Processes in Silicon (1981); tabulated in Plummer, Deal & Griffin, ' +
  'Silicon VLSI Technology (2000) ch. 7; values from memory';

/**
 * Built-in species. Charge-state terms D⁰, D⁻ (or D⁺), D⁼ in cm^2/s and eV, as recalled
 * from Fair (1981) via Plummer, Deal & Griffin (2000), Table 7-5 (from memory).
 */
export const BUILTIN_DOPANTS: Readonly<Record<string, Dopant>> = {
  B: {
    name: 'B', type: 'acceptor', source: FAIR,
    components: { neutral: { D0Cm2PerS: 0.037, EaEv: 3.46 }, single: { D0Cm2PerS: 0.72, EaEv: 3.46 } },
  },
  P: {
    name: 'P', type: 'donor', source: FAIR,
    components: {
      neutral: { D0Cm2PerS: 3.85, EaEv: 3.66 },
      single: { D0Cm2PerS: 4.44, EaEv: 4.0 },
      double: { D0Cm2PerS: 44.2, EaEv: 4.37 },
    },
  },
  As: {
    name: 'As', type: 'donor', source: FAIR,
    components: { neutral: { D0Cm2PerS: 0.066, EaEv: 3.44 }, single: { D0Cm2PerS: 12.0, EaEv: 4.05 } },
  },
  Sb: {
    name: 'Sb', type: 'donor', source: FAIR,
    components: { neutral: { D0Cm2PerS: 0.214, EaEv: 3.65 }, single: { D0Cm2PerS: 15.0, EaEv: 4.08 } },
  },
};

export function arrheniusCm2PerS(term: Arrhenius, temperatureC: number): number {
  return term.D0Cm2PerS * Math.exp(-term.EaEv / thermalEnergyEv(temperatureC));
}

/** Intrinsic diffusivity (all charge-state terms at n = p = ni), cm^2/s. */
export function intrinsicDiffusivityCm2PerS(dopant: Dopant, temperatureC: number): number {
  const { neutral, single, double } = dopant.components;
  let d = arrheniusCm2PerS(neutral, temperatureC);
  if (single) d += arrheniusCm2PerS(single, temperatureC);
  if (double) d += arrheniusCm2PerS(double, temperatureC);
  return d;
}

/** Intrinsic diffusivity in solver units, µm^2/s. */
export function intrinsicDiffusivity(dopant: Dopant, temperatureC: number): number {
  return diffusivityToSolver(intrinsicDiffusivityCm2PerS(dopant, temperatureC));
}

/** The charge-state terms at a temperature, µm²/s (absent terms are 0). */
export interface ComponentDiffusivities {
  neutral: number;
  single: number;
  double: number;
}

export function componentsAt(dopant: Dopant, temperatureC: number): ComponentDiffusivities {
  const { neutral, single, double } = dopant.components;
  return {
    neutral: diffusivityToSolver(arrheniusCm2PerS(neutral, temperatureC)),
    single: single ? diffusivityToSolver(arrheniusCm2PerS(single, temperatureC)) : 0,
    double: double ? diffusivityToSolver(arrheniusCm2PerS(double, temperatureC)) : 0,
  };
}

/**
 * Charged-defect diffusivity, µm²/s: D⁰ + D⁻(n/ni) + D⁼(n/ni)² for a donor, D⁰ + D⁺(p/ni)
 * for an acceptor (Fair 1981, via Plummer, Deal & Griffin 2000 ch. 7), with n and p from
 * neutrality at net doping `netCm3` and, when `field` is set and the dopant's type carries
 * the net doping, the built-in-field factor h = 1 + |N|/√(N² + 4ni²).
 */
export function diffusivityAt(dopant: Dopant, temperatureC: number, netCm3: number, field: boolean): number {
  const ni = intrinsicCarriersCm3(temperatureC);
  const d = componentsAt(dopant, temperatureC);
  const r = electronsOverNi(netCm3, ni);
  const charged = dopant.type === 'donor' ? d.single * r + d.double * r * r : d.single / r;
  const majority = dopant.type === 'donor' ? netCm3 > 0 : netCm3 < 0;
  return (d.neutral + charged) * (field && majority ? fieldEnhancement(netCm3, ni) : 1);
}
