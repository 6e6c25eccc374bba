import { extrapolatedSolubility, SOLUBILITY_SOURCE, SOLUBILITY_TABLE } from './solubility.ts';
import { thermalEnergyEv } from './units.ts';

/**
 * Active and inactive dopant: above a species' activation limit the dopant sits in clusters
 * or precipitates that neither diffuse nor conduct nor count in n and p. One law for every
 * species, the cluster equilibrium
 *
 *   C_total = a + m·K(T)·aᵐ,   written here   C_total = a·(1 + (a/a_c(T))^(m−1)),
 *
 * with a the active (substitutional, ionised) concentration, m the number of dopant atoms in
 * a cluster and a_c = (m·K)^(−1/(m−1)) the active level at which as much dopant is clustered
 * as active. The textbook form is M.Y. Tsai et al.'s for arsenic (1980; in Plummer, Deal &
 * Griffin (2000) ch. 7; from memory). Clusters are taken to be in equilibrium with the active
 * dopant at every instant (their forming and dissolving is fast against a furnace step).
 *
 * In the diffusion equation only the active part moves: ∂C/∂t = ∇·(D(a)·∇a) =
 * ∇·(D(a)·(∂a/∂C)·∇C). The stepper diffuses the total with the effective D(a)·∂a/∂C, where
 * ∂a/∂C = 1/(1 + m·(a/a_c)^(m−1)) lies in (0, 1]: the equation stays a conservative,
 * positive diffusion of the total (dose is conserved to rounding in a sealed step, the
 * clustered peak stays put because its effective D tends to 0), and no second, immobile
 * layer has to be advanced with its own exchange terms.
 */
export interface ActivationLaw {
  /** atoms per cluster, m */
  clusterSize: number;
  /** a_c(T), cm⁻³: the active level with as much dopant clustered as active */
  limitCm3: (temperatureC: number) => number;
  source: string;
}

/**
 * Arsenic: m = 4 (the As₄V cluster; an ab initio study finds a vacancy with four arsenic
 * neighbours the dominant deactivating complex in equilibrium). a_c(T) = 1.08e23·exp(−0.636
 * eV/kT) cm⁻³ is fitted to the commonly quoted saturation of electrically active arsenic,
 * about 2e20 cm⁻³ at 900 °C and 5e20 at 1100 °C (common practice, from memory).
 */
const ARSENIC: ActivationLaw = {
  clusterSize: 4,
  limitCm3: (t) => 1.08e23 * Math.exp(-0.636 / thermalEnergyEv(t)),
  source: 'cluster equilibrium C = n + m·K·n^m, m = 4 (M.Y. Tsai et al. 1980; Plummer, Deal & Griffin (2000) ch. 7; from memory), ' +
    'K from an active saturation of 2e20 cm^-3 at 900 °C and 5e20 at 1100 °C (common practice, from memory)',
};

/**
 * Boron: above its solid solubility boron clusters or precipitates. The same law with a_c the
 * solid solubility and a large m stands for a precipitate (m → ∞ gives a = min(C, C_ss));
 * m = 12 is our choice (no source): at ten times the solubility 1.2·C_ss stays active, and
 * ∂a/∂C stays smooth enough for the stepper.
 */
const BORON: ActivationLaw = {
  clusterSize: 12,
  limitCm3: (t) => extrapolatedSolubility(SOLUBILITY_TABLE.B, t),
  source: `solid solubility as the activation limit, ${SOLUBILITY_SOURCE}; precipitate as a cluster of m = 12 (our choice)`,
};

export const ACTIVATION_LAWS: Readonly<Record<string, ActivationLaw>> = { As: ARSENIC, B: BORON };

/**
 * Below SKIP_FRACTION·a_c^… the clustered share (a/a_c)^(m−1) is under 1e-12 and a = C is
 * taken as exact: the fraction of a_c under which that holds for a cluster size.
 */
function skipBelow(clusterSize: number): number {
  return 1e-12 ** (1 / (clusterSize - 1));
}

/** xᵏ for a small whole k, by multiplication. */
function power(x: number, k: number): number {
  let out = 1;
  for (let j = 0; j < k; j++) out *= x;
  return out;
}

/**
 * The active concentration a at a total C, cm⁻³: the root of a·(1 + (a/a_c)^(m−1)) = C,
 * by Newton's method from a guess exact in both limits (a ≈ C well below a_c, a ≈
 * a_c·(C/a_c)^(1/m) well above). The left side is increasing and convex in a, so the
 * iteration converges from any start above the root, and the first step lands above it.
 */
export function activeConcentration(totalCm3: number, limitCm3: number, clusterSize: number): number {
  if (!(totalCm3 > skipBelow(clusterSize) * limitCm3)) return totalCm3 > 0 ? totalCm3 : 0;
  return solveActive(totalCm3, limitCm3, clusterSize);
}

function solveActive(c: number, limit: number, m: number): number {
  const ratio = c / limit;
  let a = c / (1 + ratio ** ((m - 1) / m));
  for (let it = 0; it < 60; it++) {
    const xm1 = power(a / limit, m - 1);
    const g = a * (1 + xm1) - c;
    const step = g / (1 + m * xm1);
    a -= step;
    if (Math.abs(step) <= 1e-14 * a) break;
  }
  return a;
}

/** ∂a/∂C at an active concentration a: 1/(1 + m·(a/a_c)^(m−1)). */
export function activeSlope(activeCm3: number, limitCm3: number, clusterSize: number): number {
  return 1 / (1 + clusterSize * power(activeCm3 / limitCm3, clusterSize - 1));
}

/**
 * The active concentration at every node of a total field (cm⁻³; negative totals, which the
 * stepper's rounding can leave far below any limit, count as 0), and ∂a/∂C into `slope`
 * where given. Nodes below the skip level take a = C and slope 1 without a solve.
 */
export function activateField(active: Float64Array, slope: Float64Array | null, total: Float64Array,
                              limitCm3: number, clusterSize: number): void {
  const skip = skipBelow(clusterSize) * limitCm3;
  for (let k = 0; k < total.length; k++) {
    const c = total[k];
    if (c <= skip) {
      active[k] = c > 0 ? c : 0;
      if (slope !== null) slope[k] = 1;
      continue;
    }
    const a = solveActive(c, limitCm3, clusterSize);
    active[k] = a;
    if (slope !== null) slope[k] = 1 / (1 + clusterSize * power(a / limitCm3, clusterSize - 1));
  }
}
