/**
 * Where the interstitials an oxidising window injects go: the steady state of
 * L²·∇²u = u (u = S − 1; diffusion with bulk recombination, diffusion length L) in the
 * half-plane z > 0, with a uniform injected flux through the windows and no flux through
 * the mask (nitride neither oxidises nor takes up interstitials here) nor through the side
 * walls of the cross-section. The Green's function of a line source on a reflecting plane is
 * K₀(r/L)/π per unit source (the free-space 2D one, K₀/2π, doubled by its image), so that
 *   u(x, z) = u_s · (1/πL) · Σ_windows ∫ K₀(√((x − s)² + z²)/L) ds,
 * normalised so that an infinitely wide window gives u_s·exp(−z/L)
 * (∫ K₀(√(s² + z²)/L) ds over all s = πL·exp(−z/L)). The side walls are reflecting
 * too, so each window is summed with its mirror images across x = 0 and x = width.
 */

/**
 * Modified Bessel function K₀(x), x > 0: the polynomial approximations of Abramowitz & Stegun
 * 9.8.1, 9.8.5 and 9.8.6 (|error| below 1e-7 relative; coefficients as printed there).
 */
export function besselK0(x: number): number {
  if (x <= 2) {
    const y = (x * x) / 4;
    const t = (x / 3.75) ** 2;
    const i0 = 1 + t * (3.5156229 + t * (3.0899424 + t * (1.2067492 + t * (0.2659732 + t * (0.0360768 + t * 0.0045813)))));
    return -Math.log(x / 2) * i0 +
      (-0.57721566 + y * (0.4227842 + y * (0.23069756 + y * (0.0348859 + y * (0.00262698 + y * (0.0001075 + y * 0.0000074))))));
  }
  const y = 2 / x;
  return (Math.exp(-x) / Math.sqrt(x)) *
    (1.25331414 + y * (-0.07832358 + y * (0.02189568 + y * (-0.01062446 + y * (0.00587872 + y * (-0.0025154 + y * 0.00053208))))));
}

/** 16-point Gauss–Legendre nodes and weights on [−1, 1] (positive half; symmetric). */
const GL_X = [0.0950125098376374, 0.2816035507792589, 0.4580167776572274, 0.6178762444026438,
  0.755404408355003, 0.8656312023878318, 0.9445750230732326, 0.9894009349916499];
const GL_W = [0.1894506104550685, 0.1826034150449236, 0.1691565193950025, 0.1495959888165767,
  0.1246289712555339, 0.0951585116824928, 0.0622535239386479, 0.0271524594117541];

/** ∫ K₀(√(s² + z²)) ds over [a, b] (lengths in units of L) by 16-point Gauss–Legendre. */
function panel(a: number, b: number, z2: number): number {
  const half = 0.5 * (b - a);
  const mid = 0.5 * (a + b);
  let sum = 0;
  for (let k = 0; k < 8; k++) {
    const d = half * GL_X[k];
    sum += GL_W[k] * (besselK0(Math.sqrt((mid - d) ** 2 + z2) + 1e-300) + besselK0(Math.sqrt((mid + d) ** 2 + z2) + 1e-300));
  }
  return half * sum;
}

/** Beyond this many L a window's far edge adds under exp(−30) ≈ 1e-13. */
const FAR = 30;

/**
 * G(d, z) = (1/π)·∫₀^|d| K₀(√(s² + z²)) ds·sign(d), lengths in units of L; G(±∞, z) = ±exp(−z)/2.
 * The first panel [0, min(|d|, 1)] is taken in s = t², which turns K₀'s logarithmic
 * singularity at the surface (z = 0, s = 0) into a smooth integrand; then panels doubling in
 * length out to |d| or FAR.
 */
export function spreadIntegral(d: number, z: number): number {
  const sign = d < 0 ? -1 : 1;
  const reach = Math.abs(d);
  if (z > FAR) return 0;
  if (reach >= FAR) return (sign * Math.exp(-z)) / 2;
  const z2 = z * z;
  // First panel in t = √s: ∫₀^c K₀(√(s² + z²)) ds = ∫₀^√c 2t·K₀(√(t⁴ + z²)) dt.
  const c = Math.min(reach, 1);
  const root = Math.sqrt(c);
  const half = 0.5 * root;
  let sum = 0;
  for (let k = 0; k < 8; k++) {
    for (const t of [half - half * GL_X[k], half + half * GL_X[k]]) {
      sum += GL_W[k] * 2 * t * besselK0(Math.sqrt(t ** 4 + z2) + 1e-300);
    }
  }
  let total = half * sum;
  for (let a = 1; a < reach; a *= 2) total += panel(a, Math.min(2 * a, reach), z2);
  return (sign * total) / Math.PI;
}

/** Table points per row, on d = FAR·(k/N)² (fine near the edge, where G changes fastest). */
const TABLE_POINTS = 256;

/**
 * G(·, z) of one row on the table's points (out[k] at d = FAR·(k/N)²), each interval by
 * 16-point Gauss–Legendre and the first in s = t² (see spreadIntegral).
 */
function rowTable(z: number, out: Float64Array): void {
  const z2 = z * z;
  const n = TABLE_POINTS;
  out[0] = 0;
  let total = 0;
  for (let k = 1; k <= n; k++) {
    const a = FAR * ((k - 1) / n) ** 2;
    const b = FAR * (k / n) ** 2;
    if (k === 1) {
      const half = 0.5 * Math.sqrt(b);
      let sum = 0;
      for (let m = 0; m < 8; m++) {
        const t1 = half - half * GL_X[m];
        const t2 = half + half * GL_X[m];
        sum += GL_W[m] * 2 * (t1 * besselK0(Math.sqrt(t1 ** 4 + z2) + 1e-300) + t2 * besselK0(Math.sqrt(t2 ** 4 + z2) + 1e-300));
      }
      total += half * sum;
    } else {
      total += panel(a, b, z2);
    }
    out[k] = total / Math.PI;
  }
}

/** G(d, z) from a row's table by linear interpolation in d. */
function fromTable(table: Float64Array, d: number): number {
  const reach = Math.abs(d);
  const n = TABLE_POINTS;
  const position = n * Math.sqrt(Math.min(reach, FAR) / FAR);
  const k = Math.min(n - 1, Math.floor(position));
  const a = FAR * (k / n) ** 2;
  const b = FAR * ((k + 1) / n) ** 2;
  const value = reach >= FAR ? table[n] : table[k] + ((table[k + 1] - table[k]) * (reach - a)) / (b - a);
  return d < 0 ? -value : value;
}

/**
 * u/u_s at every node of a tensor mesh (row-major [z][x]; x at `x`, z at `z`, µm) for windows
 * [x0, x1] on a cross-section [0, width] with reflecting side walls, diffusion length L (µm).
 * Computed once per run (it depends on the mask and L alone), from a table of G per row.
 */
export function oxidationSpread(x: ArrayLike<number>, z: ArrayLike<number>, windows: readonly (readonly [number, number])[],
                                widthUm: number, lengthUm: number): Float64Array {
  const nx = x.length;
  const nz = z.length;
  const out = new Float64Array(nx * nz);
  // Mirror images across both walls: windows shifted by 2k·width, and reflected (−x).
  const edges: number[] = [];
  const copies = Math.ceil((FAR * lengthUm) / (2 * widthUm)) + 1;
  for (let k = -copies; k <= copies; k++) {
    const shift = 2 * k * widthUm;
    for (const [a, b] of windows) edges.push(a + shift, b + shift, -b + shift, -a + shift);
  }
  const table = new Float64Array(TABLE_POINTS + 1);
  for (let j = 0; j < nz; j++) {
    const zz = z[j] / lengthUm;
    if (zz > FAR) continue;
    rowTable(zz, table);
    for (let i = 0; i < nx; i++) {
      let u = 0;
      for (let e = 0; e < edges.length; e += 2) {
        u += fromTable(table, (x[i] - edges[e]) / lengthUm) - fromTable(table, (x[i] - edges[e + 1]) / lengthUm);
      }
      out[j * nx + i] = u;
    }
  }
  return out;
}
