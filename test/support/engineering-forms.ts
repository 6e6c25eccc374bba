/**
 * Reference values for the engineering results, from the closed forms of REFERENCES.md and
 * quadratures written here independently of the solver's own (Gauss–Legendre on many
 * panels, against the solver's trapezoids on its mesh).
 */
import { conductivitySPerCm, type MobilityFit } from '../../packages/solver2d/src/mobility.ts';
import { bisect, erf } from './closed-forms.ts';

/** 5-point Gauss–Legendre nodes and weights on [−1, 1] (Abramowitz & Stegun, Table 25.4). */
const GL_X = [0, -0.5384693101056831, 0.5384693101056831, -0.9061798459386640, 0.9061798459386640];
const GL_W = [0.5688888888888889, 0.4786286704993665, 0.4786286704993665, 0.2369268850561891, 0.2369268850561891];

/** ∫_a^b f by 5-point Gauss–Legendre on `panels` equal panels. */
export function integrate(f: (x: number) => number, a: number, b: number, panels = 400): number {
  const h = (b - a) / panels;
  let sum = 0;
  for (let p = 0; p < panels; p++) {
    const mid = a + (p + 0.5) * h;
    for (let k = 0; k < 5; k++) sum += GL_W[k] * f(mid + 0.5 * h * GL_X[k]);
  }
  return 0.5 * h * sum;
}

/** Fixed dose Q in the window |x| < a, sealed surface, no walls: the REFERENCES.md form. */
export interface FilmWindow {
  /** dose, cm^-2 */
  q: number;
  /** Dt, µm² */
  dt: number;
  /** half width, µm (window centred on x = 0) */
  a: number;
  /** background of the other type, cm^-3 */
  nb: number;
}

export function filmAmplitude(c: FilmWindow): number {
  return c.q / (Math.sqrt(Math.PI * c.dt) * 1e-4);
}

/** ½[erf((a−x)/2√(Dt)) + erf((a+x)/2√(Dt))] */
export function lateralFactor(c: FilmWindow, x: number): number {
  const s = 2 * Math.sqrt(c.dt);
  return 0.5 * (erf((c.a - x) / s) + erf((c.a + x) / s));
}

export function filmConcentration(c: FilmWindow, x: number, z: number): number {
  return filmAmplitude(c) * Math.exp(-(z * z) / (4 * c.dt)) * lateralFactor(c, x);
}

export function filmJunctionDepth(c: FilmWindow, x = 0): number {
  return 2 * Math.sqrt(c.dt * Math.log((filmAmplitude(c) * lateralFactor(c, x)) / c.nb));
}

/** Lateral encroachment beyond the edge x = a, at the surface. */
export function filmLateral(c: FilmWindow): number {
  return bisect((x) => filmAmplitude(c) * lateralFactor(c, x) - c.nb, c.a, c.a + 40 * Math.sqrt(c.dt)) - c.a;
}

function sigma(c: FilmWindow, fit: MobilityFit, x: number, z: number): number {
  const n = filmConcentration(c, x, z);
  return n > c.nb ? conductivitySPerCm(n - c.nb, n + c.nb, fit) : 0;
}

/** Sheet conductance at the window centre, S per square. */
export function filmSheetConductance(c: FilmWindow, fit: MobilityFit): number {
  return integrate((z) => sigma(c, fit, 0, z), 0, filmJunctionDepth(c)) * 1e-4;
}

/** ∬σ dA over the diffused region, S/cm·µm² (the integrand is cut to the region, so many panels). */
export function filmRegionConductance(c: FilmWindow, fit: MobilityFit, panels = 120): number {
  const xEnd = c.a + filmLateral(c);
  const column = (x: number) => {
    const zj = filmJunctionDepth(c, x);
    return Number.isFinite(zj) ? integrate((z) => sigma(c, fit, x, z), 0, zj, 60) : 0;
  };
  return 2 * integrate(column, 0, xEnd, panels);
}

const SQRT_PI = Math.sqrt(Math.PI);

/**
 * Radius of curvature of the exact junction under the right mask edge, where its normal is at
 * 45°. With φ = ln C: φx = f′/f, φxx = f″/f − (f′/f)², φz = −z/2Dt, φzz = −1/2Dt, φxz = 0,
 * κ = |φxx·φz² + φzz·φx²| / (φx² + φz²)^(3/2).
 */
export function filmEdgeRadius(c: FilmWindow): { radius: number; x: number; z: number } {
  const L = Math.sqrt(c.dt);
  const k = 1 / (2 * L * SQRT_PI);
  const g = (u: number) => Math.exp(-(u * u));
  const f = (x: number) => lateralFactor(c, x);
  const f1 = (x: number) => k * (-g((c.a - x) / (2 * L)) + g((c.a + x) / (2 * L)));
  const f2 = (x: number) => k * (-((c.a - x) / (2 * L * L)) * g((c.a - x) / (2 * L)) - ((c.a + x) / (2 * L * L)) * g((c.a + x) / (2 * L)));
  const amplitude = filmAmplitude(c);
  const xOnJunction = (z: number) => bisect((x) => amplitude * Math.exp(-(z * z) / (4 * c.dt)) * f(x) - c.nb, 0, c.a + 40 * L);
  const tilt = (z: number) => {
    const x = xOnJunction(z);
    return Math.abs(f1(x) / f(x)) - z / (2 * c.dt);
  };
  const z = bisect(tilt, 1e-9, 0.999 * filmJunctionDepth(c));
  const x = xOnJunction(z);
  const px = f1(x) / f(x);
  const pxx = f2(x) / f(x) - px * px;
  const pz = -z / (2 * c.dt);
  const pzz = -1 / (2 * c.dt);
  const kappa = Math.abs(pxx * pz * pz + pzz * px * px) / (px * px + pz * pz) ** 1.5;
  return { radius: 1 / kappa, x, z };
}
