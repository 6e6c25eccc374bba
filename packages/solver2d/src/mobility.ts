/**
 * Low-field mobility of electrons and holes in silicon at room temperature against the
 * total ionised impurity density N = N_D + N_A, and the resistivity that follows.
 *
 * G. Masetti, M. Severi and S. Solmi, "Modeling of carrier mobility against carrier
 * concentration in arsenic-, phosphorus-, and boron-doped silicon", IEEE Trans. Electron
 * Devices 30 (1983) 764, with the parameters of its Table I:
 *
 *   μ(N) = μmin1·exp(−Pc/N) + (μmax − μmin2) / (1 + (N/Cr)^α) − μ1 / (1 + (Cs/N)^β)
 *
 * The fits were made against carrier density; here every dopant atom counts as ionised,
 * the usual reading for diffused layers (Irvin's curves of average conductivity make the
 * same assumption). Near 1e18 cm^-3 of boron, where a sizeable fraction is not ionised at
 * room temperature, this reads the resistivity of bulk material about a tenth low.
 */

/** Elementary charge, C (SI 2019, exact). */
const ELEMENTARY_CHARGE_C = 1.602176634e-19;

export type Carrier = 'electron' | 'hole';

export interface MobilityFit {
  name: string;
  carrier: Carrier;
  /** cm^2/(V·s) */
  muMin1: number;
  muMin2: number;
  mu1: number;
  muMax: number;
  /** cm^-3 */
  pc: number;
  cr: number;
  cs: number;
  alpha: number;
  beta: number;
  source: string;
}

const MASETTI = 'Masetti, Severi & Solmi, IEEE TED 30 (1983) 764, Table I';

/** The three fits of Masetti et al. (1983), Table I. */
export const MOBILITY_FITS = {
  phosphorus: {
    name: 'phosphorus', carrier: 'electron', muMin1: 68.5, muMin2: 68.5, mu1: 56.1, muMax: 1414,
    pc: 0, cr: 9.2e16, cs: 3.41e20, alpha: 0.711, beta: 1.98, source: MASETTI,
  },
  arsenic: {
    name: 'arsenic', carrier: 'electron', muMin1: 52.2, muMin2: 52.2, mu1: 43.4, muMax: 1417,
    pc: 0, cr: 9.68e16, cs: 3.43e20, alpha: 0.68, beta: 2.0, source: MASETTI,
  },
  boron: {
    name: 'boron', carrier: 'hole', muMin1: 44.9, muMin2: 0, mu1: 29.0, muMax: 470.5,
    pc: 9.23e16, cr: 2.23e17, cs: 6.1e20, alpha: 0.719, beta: 2.0, source: MASETTI,
  },
} as const satisfies Record<string, MobilityFit>;

/**
 * The fit for a layer whose majority dopant is `dopant`: the paper's own fit for B, P and As;
 * Sb (a large donor like As) takes the arsenic fit; other donors the phosphorus fit and other
 * acceptors the boron fit, the only hole fit there is.
 */
export function fitForDopant(dopant: string, carrier: Carrier): MobilityFit {
  if (carrier === 'hole') return MOBILITY_FITS.boron;
  if (dopant === 'As' || dopant === 'Sb') return MOBILITY_FITS.arsenic;
  return MOBILITY_FITS.phosphorus;
}

/** Mobility at a total ionised impurity density (cm^-3), cm^2/(V·s). */
export function mobilityCm2PerVs(totalCm3: number, fit: MobilityFit): number {
  const n = Math.max(totalCm3, 0);
  // exp(−Pc/N) → 0 as N → 0; with Pc = 0 the term is μmin1 at every N.
  const low = fit.pc === 0 ? fit.muMin1 : n > 0 ? fit.muMin1 * Math.exp(-fit.pc / n) : 0;
  const lattice = (fit.muMax - fit.muMin2) / (1 + (n / fit.cr) ** fit.alpha);
  const clustered = n > 0 ? fit.mu1 / (1 + (fit.cs / n) ** fit.beta) : 0;
  return low + lattice - clustered;
}

/** Conductivity q·μ(N_total)·|N_net|, S/cm. */
export function conductivitySPerCm(netCm3: number, totalCm3: number, fit: MobilityFit): number {
  return ELEMENTARY_CHARGE_C * mobilityCm2PerVs(totalCm3, fit) * Math.abs(netCm3);
}

/** Resistivity of uniformly doped silicon with one dopant at `dopantCm3`, Ω·cm. */
export function resistivityOhmCm(dopantCm3: number, fit: MobilityFit): number {
  return 1 / conductivitySPerCm(dopantCm3, dopantCm3, fit);
}
