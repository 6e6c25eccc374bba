/**
 * Impact-ionisation coefficients of silicon at 300 K, α(E) in 1/cm for E in V/cm, and the
 * avalanche ionisation integral along a path through the depletion region.
 *
 * Chynoweth's law α = a·exp(−b/E), with the constants of
 * - R. Van Overstraeten and H. De Man, Solid-State Electronics 13 (1970) 583: electrons
 *   a = 7.03e5 /cm, b = 1.231e6 V/cm; holes a = 1.582e6, b = 2.036e6 below 4e5 V/cm and
 *   a = 6.71e5, b = 1.693e6 above (the same numbers are quoted in public device codes that cite
 *   the paper; the electrons' low-field branch is left out: below 2e5 V/cm α is negligible);
 * - D.J. Massey, J.P.R. David and G.J. Rees, IEEE Trans. Electron Devices 53 (2006) 2328:
 *   a_n = 4.43e5 /cm, b_n = 9.66e5 + 499·T V/cm; a_p = 1.13e6 /cm, b_p = 1.71e6 + 1090·T V/cm
 *   (confirmed in a public detector-simulation manual that quotes the paper);
 * and Fulop's power law α = 1.8e-35·E^7 for both carriers (W. Fulop, Solid-State Electronics
 * 10 (1967) 39; the form Baliga's closed-form breakdown laws rest on; from memory).
 */
export interface IonisationModel {
  name: string;
  source: string;
  electron(fieldVPerCm: number): number;
  hole(fieldVPerCm: number): number;
}

const T300 = 300;

export const VAN_OVERSTRAETEN_DE_MAN: IonisationModel = {
  name: 'van-overstraeten-de-man',
  source: 'R. Van Overstraeten and H. De Man, Solid-State Electronics 13 (1970) 583',
  electron: (e) => (e > 0 ? 7.03e5 * Math.exp(-1.231e6 / e) : 0),
  hole: (e) => (e <= 0 ? 0 : e < 4e5 ? 1.582e6 * Math.exp(-2.036e6 / e) : 6.71e5 * Math.exp(-1.693e6 / e)),
};

export const MASSEY: IonisationModel = {
  name: 'massey',
  source: 'D.J. Massey, J.P.R. David and G.J. Rees, IEEE Trans. Electron Devices 53 (2006) 2328',
  electron: (e) => (e > 0 ? 4.43e5 * Math.exp(-(9.66e5 + 499 * T300) / e) : 0),
  hole: (e) => (e > 0 ? 1.13e6 * Math.exp(-(1.71e6 + 1090 * T300) / e) : 0),
};

export const FULOP: IonisationModel = {
  name: 'fulop',
  source: 'W. Fulop, Solid-State Electronics 10 (1967) 39 (from memory)',
  electron: (e) => 1.8e-35 * Math.abs(e) ** 7,
  hole: (e) => 1.8e-35 * Math.abs(e) ** 7,
};

export const IONISATION_MODELS: readonly IonisationModel[] = [VAN_OVERSTRAETEN_DE_MAN, MASSEY, FULOP];

/**
 * Ionisation integral along a path sampled at `count` points, with |E| (V/cm) at each and the
 * arc length s (µm) from the end where holes enter (the n side: holes drift along E towards
 * the p side). Breakdown when it reaches 1 (Sze & Ng (2007) ch. 2, the condition M → ∞):
 *   I = ∫₀ᵂ α_p·exp(−∫₀ˢ (α_p − α_n) ds′) ds.
 * With α_n = α_p it is ∫α ds; with one carrier alone it never reaches 1. Trapezoid rule.
 */
export function ionisationIntegral(model: IonisationModel, field: Float64Array, arcUm: Float64Array, count: number): number {
  if (count < 2) return 0;
  let inner = 0;
  let total = 0;
  let prevAp = model.hole(field[0]);
  let prevAn = model.electron(field[0]);
  let prevIntegrand = prevAp;
  for (let k = 1; k < count; k++) {
    const ds = (arcUm[k] - arcUm[k - 1]) * 1e-4;
    const ap = model.hole(field[k]);
    const an = model.electron(field[k]);
    inner += 0.5 * (ap - an + prevAp - prevAn) * ds;
    const integrand = ap * Math.exp(-inner);
    total += 0.5 * (integrand + prevIntegrand) * ds;
    prevIntegrand = integrand;
    prevAp = ap;
    prevAn = an;
  }
  return total;
}
