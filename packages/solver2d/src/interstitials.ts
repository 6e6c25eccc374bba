import { oxidationRateUmPerS, oxideAfterUm, startingOxideUm } from './oxidation.ts';
import { thermalEnergyEv, UM_TO_CM } from './units.ts';

/**
 * Interstitial supersaturation S = C_I/C_I* and what it does to dopant diffusion.
 *
 * A dopant diffuses partly with interstitials (fraction f_I of its equilibrium D) and partly
 * with vacancies: D_eff = D·(f_I·S + (1 − f_I)·C_V/C_V*). Two sources of S are modelled:
 * the damage of an implant (transient enhanced diffusion, TED) and an oxidising surface
 * (oxidation-enhanced diffusion, OED; the vacancy term then gives antimony its retardation).
 */

/**
 * f_I per built-in species. A. Ural, P.B. Griffin and J.D. Plummer, J. Appl. Phys. 85 (1999)
 * 6440, bound the fractions from oxidation and nitridation at 1000–1100 °C: "B and P diffuse by
 * a self-interstitial mechanism, whereas Sb diffusion is almost exclusively vacancy mediated"
 * and As by both. The numbers are recalled (from memory): B and P taken as 1 (their lower
 * bounds are near 0.9–1), As 0.4, Sb 0.02.
 */
export const INTERSTITIAL_FRACTION: Readonly<Record<string, number>> = { B: 1, P: 1, As: 0.4, Sb: 0.02 };

/** The species each model applies to: TED enhances B and P; OED enhances B and P and retards Sb. */
export const TED_SPECIES: readonly string[] = ['B', 'P'];
export const OED_SPECIES: readonly string[] = ['B', 'P', 'Sb'];

/**
 * D_eff/D at supersaturation S with vacancies in local equilibrium with the interstitials,
 * C_I·C_V = C_I*·C_V* (bulk recombination fast against the dopant's motion; the assumption
 * of T.Y. Tan and U. Gösele's analysis of oxidation-enhanced and -retarded diffusion, Appl.
 * Phys. A 31 (1983) 97, whose abstract says I and V coexist in equilibrium under oxidation).
 */
export function diffusivityFactor(fractionI: number, supersaturation: number): number {
  return fractionI * supersaturation + (1 - fractionI) / supersaturation;
}

// ── Transient enhanced diffusion ──────────────────────────────────────────────────────────

/** Silicon atoms per cm³. */
const SILICON_ATOMS_CM3 = 5e22;

/**
 * Interstitial transport capacity D_I·C_I*, cm⁻¹·s⁻¹: 2980·exp(−4.95 eV/kT) cm²/s in units of
 * the atomic density (H. Bracht, E.E. Haller and R. Clark-Phelps, Phys. Rev. Lett. 81 (1998)
 * 393, from the self-diffusion of isotope structures; from memory) times 5e22 cm⁻³.
 */
export function interstitialTransportPerCmS(temperatureC: number): number {
  return 2980 * Math.exp(-4.95 / thermalEnergyEv(temperatureC)) * SILICON_ATOMS_CM3;
}

/**
 * Lifetime of the excess interstitials, s: the {311} clusters that hold them dissolve with an
 * activation energy of 3.8 eV (D.J. Eaglesham et al., Appl. Phys. Lett. 65 (1994) 2305; from
 * memory), and for boron implants below 1e14 cm⁻² the enhanced diffusion is over within 10 s
 * at 1000 °C (rapid-anneal studies with TEM and SIMS, stated so in their abstract), taken here
 * as three lifetimes: τ(1000 °C) = 3 s. That puts τ(800 °C) near 32 min and τ(1100 °C) near 0.24 s.
 */
export const TED_ACTIVATION_EV = 3.8;
export const TED_LIFETIME_1000C_S = 3;

export function tedLifetimeS(temperatureC: number): number {
  return TED_LIFETIME_1000C_S * Math.exp(TED_ACTIVATION_EV * (1 / thermalEnergyEv(temperatureC) - 1 / thermalEnergyEv(1000)));
}

/**
 * The "+1" model (M.D. Giles, J. Electrochem. Soc. 138 (1991) 1160; from memory): an implant
 * leaves one excess interstitial per implanted ion, held near its projected range Rp. They
 * leave by diffusing to the surface, where S = 1: a flux D_I·C_I*·(S − 1)/Rp. With the pool
 * M = Σ dose·Rp (cm⁻¹) draining over the lifetime τ, dM/dt = −M/τ, the balance gives
 *   S − 1 = M/(τ·D_I·C_I*),  M(t) = M₀·exp(−t/τ),
 * so that ∫(S − 1) dt = M₀/(D_I·C_I*): the extra thermal budget of a dopant is
 * f_I·D·M₀/(D_I·C_I*), whatever τ is, and it grows as the temperature falls (D of boron has
 * 3.46 eV, D_I·C_I* 4.95 eV).
 */
export function tedPoolPerCm(doseCm2: number, depthUm: number): number {
  return doseCm2 * depthUm * UM_TO_CM;
}

/** S − 1 from a pool M (cm⁻¹) at a temperature. */
export function tedExcess(poolPerCm: number, temperatureC: number): number {
  return poolPerCm / (tedLifetimeS(temperatureC) * interstitialTransportPerCmS(temperatureC));
}

/**
 * Over `seconds` at a fixed temperature from pool M₀: ∫(S − 1) dt (s) in OUT[0] and the
 * pool left, M₀·exp(−t/τ), in OUT[1]. Written into `out` so that a time loop allocates nothing.
 */
export function tedInterval(poolPerCm: number, temperatureC: number, seconds: number, out: Float64Array): Float64Array {
  const tau = tedLifetimeS(temperatureC);
  const drained = -Math.expm1(-seconds / tau);
  out[0] = (poolPerCm / interstitialTransportPerCmS(temperatureC)) * drained;
  out[1] = poolPerCm * (1 - drained);
  return out;
}

// ── Oxidation-enhanced diffusion ──────────────────────────────────────────────────────────

/**
 * The surface supersaturation an oxidising interface injects follows a power of the oxidation
 * rate, S_s − 1 = K·(dx/dt)ⁿ. R.F. Lever, P.B. Griffin and W.A. Rausch, J. Appl. Phys. 78
 * (1995) 3115, modelled boron OED under steam with S_s − 1 ∝ √(dx/dt): n = 0.5 here (the
 * textbook range is 0.3–0.6; Plummer, Deal & Griffin ch. 7, from memory).
 */
export const OED_EXPONENT = 0.5;

/**
 * K is fixed by one recalled figure (from memory, Plummer, Deal & Griffin ch. 7): boron
 * diffuses about twice as fast during dry oxidation of (100) silicon at 1100 °C, i.e.
 * S_s − 1 = 1 at the rate after 60 min of dry oxidation at 1100 °C (0.065 µm/h by Deal–Grove).
 * K does not depend on temperature here: the published enhancement grows as the temperature
 * falls, which this model understates below about 1000 °C (README, limits).
 */
export const OED_REFERENCE = { temperatureC: 1100, minutes: 60, excess: 1 } as const;

const OED_REFERENCE_RATE_UM_PER_S = oxidationRateUmPerS('dry-oxygen', OED_REFERENCE.temperatureC,
  oxideAfterUm('dry-oxygen', OED_REFERENCE.temperatureC, OED_REFERENCE.minutes * 60, startingOxideUm('dry-oxygen')));

export const OED_COEFFICIENT = OED_REFERENCE.excess / OED_REFERENCE_RATE_UM_PER_S ** OED_EXPONENT;

/** S_s − 1 at an oxidising surface of a wide window, from the oxidation rate (µm/s). */
export function oedSurfaceExcess(rateUmPerS: number): number {
  return rateUmPerS > 0 ? OED_COEFFICIENT * rateUmPerS ** OED_EXPONENT : 0;
}

/**
 * How far the injected interstitials reach, µm: they diffuse from the oxidising windows and
 * recombine in the bulk, S − 1 falling as exp(−z/L) below a wide window and, under a nitride
 * mask, sideways from its edge (interstitial-spread.ts). Lateral OED under nitride stripes has
 * been seen to reach several µm to tens of µm at 1000–1100 °C (S. Mizuo and H. Higuchi's
 * mask-edge experiments; from memory): a stated L = 10 µm, the same at every temperature.
 */
export const OED_DIFFUSION_LENGTH_UM = 10;
