/**
 * Closed-form solutions used as outside references (../shared/REFERENCES.md), written out
 * here independently of the solver. erf/erfc/erfcinv come from @stdlib, a general-purpose
 * reference library.
 */
import erf from '@stdlib/math-base-special-erf';
import erfc from '@stdlib/math-base-special-erfc';
import erfcinv from '@stdlib/math-base-special-erfcinv';

export { erf, erfc, erfcinv };

/** Boltzmann constant, eV/K (CODATA 2018, exact). */
export const K_B_EV = 8.617333262e-5;

/** D = D0·exp(−Ea/kT) in µm²/s, from D0 in cm²/s, Ea in eV, T in °C. */
export function arrheniusUm2PerS(d0Cm2PerS: number, eaEv: number, temperatureC: number): number {
  return d0Cm2PerS * 1e8 * Math.exp(-eaEv / (K_B_EV * (temperatureC + 273.15)));
}

/** Constant surface concentration, 1D: C = Cs·erfc(z / 2√(Dt)); Dt in µm². */
export function erfcProfile(z: number, cs: number, dt: number): number {
  return cs * erfc(z / (2 * Math.sqrt(dt)));
}

/** Dose of the erfc profile: Q = 2·Cs·√(Dt/π), cm^-2 (Dt in µm², 1 µm = 1e-4 cm). */
export function erfcDose(cs: number, dt: number): number {
  return 2 * cs * Math.sqrt(dt / Math.PI) * 1e-4;
}

/** Junction depth of the erfc profile in a background NB: 2√(Dt)·erfc⁻¹(NB/Cs). */
export function erfcJunctionDepth(cs: number, nb: number, dt: number): number {
  return 2 * Math.sqrt(dt) * erfcinv(nb / cs);
}

export interface FilmCase {
  /** dose, cm^-2 */
  q: number;
  /** Dt, µm² */
  dt: number;
  /** window, µm */
  x0: number;
  x1: number;
  /** cross-section width and depth, µm: zero-flux walls, handled by images */
  width: number;
  depth: number;
}

/**
 * Fixed dose Q placed in the window at the surface, sealed surface (exact, separable):
 * C = Q/√(πDt)·exp(−z²/4Dt)·½[erf((x1−x)/2√(Dt)) − erf((x0−x)/2√(Dt))], which is the
 * REFERENCES.md form for a window |x| < a. Zero-flux side walls and bottom are added by
 * mirror images (x → −x, x → 2W − x, z → 2H − z), enough of them to be exact to round-off.
 */
export function filmField(c: FilmCase, x: number, z: number): number {
  const s = 2 * Math.sqrt(c.dt);
  let lateral = 0;
  for (let n = -2; n <= 2; n++) {
    const shift = 2 * n * c.width;
    for (const xs of [x - shift, -x - shift]) lateral += 0.5 * (erf((c.x1 - xs) / s) - erf((c.x0 - xs) / s));
  }
  const vertical = Math.exp(-(z * z) / (4 * c.dt)) + Math.exp(-((2 * c.depth - z) ** 2) / (4 * c.dt));
  return (c.q / (Math.sqrt(Math.PI * c.dt) * 1e-4)) * vertical * lateral;
}

export interface ImplantCase {
  /** dose, cm^-2; projected range, straggle and lateral straggle, µm */
  q: number;
  rp: number;
  straggle: number;
  lateralStraggle: number;
  /** ∫D dt of the anneal, µm² */
  dt: number;
  /** window, µm */
  x0: number;
  x1: number;
  /** cross-section width and depth, µm: zero-flux walls, handled by images */
  width: number;
  depth: number;
}

/**
 * An implanted Gaussian (dose Q, range Rp, straggle σ; lateral straggle σl at the window
 * edges) after an anneal of budget Dt with constant D (exact, separable): diffusion
 * convolves the profile with a Gaussian of variance 2Dt in each direction, so the variances
 * become σ² + 2Dt and σl² + 2Dt, and the sealed surface is a mirror (an image at −Rp), as
 * are the walls and the bottom. The part of the as-implanted Gaussian above the surface is
 * scaled away as the solver does (the dose in silicon is Q); with Rp ≥ 5σ that part is
 * below 3e-7 of the dose, and the mirrored profile is the mirrored Gaussian to that order.
 */
export function implantField(c: ImplantCase, x: number, z: number): number {
  const s2 = c.straggle ** 2 + 2 * c.dt;
  const sl = Math.SQRT2 * Math.sqrt(c.lateralStraggle ** 2 + 2 * c.dt);
  let lateral = 0;
  for (let n = -2; n <= 2; n++) {
    const shift = 2 * n * c.width;
    for (const xs of [x - shift, -x - shift]) lateral += 0.5 * (erf((c.x1 - xs) / sl) - erf((c.x0 - xs) / sl));
  }
  const g = (centre: number) => Math.exp(-((z - centre) ** 2) / (2 * s2));
  const vertical = g(c.rp) + g(-c.rp) + g(2 * c.depth - c.rp) + g(2 * c.depth + c.rp);
  const inSilicon = 0.5 * (1 + erf(c.rp / (Math.SQRT2 * c.straggle)));
  return (c.q / (inSilicon * Math.sqrt(2 * Math.PI * s2) * 1e-4)) * vertical * lateral;
}

/** Root of f on [a, b] by bisection (f(a), f(b) of opposite sign), to `tol`. */
export function bisect(f: (x: number) => number, a: number, b: number, tol = 1e-12): number {
  let fa = f(a);
  if (fa * f(b) > 0) throw new Error(`no sign change on [${a}, ${b}]`);
  for (let k = 0; k < 200 && b - a > tol; k++) {
    const m = 0.5 * (a + b);
    const fm = f(m);
    if ((fm > 0) === (fa > 0)) { a = m; fa = fm; } else b = m;
  }
  return 0.5 * (a + b);
}
