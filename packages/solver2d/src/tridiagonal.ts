/**
 * Thomas algorithm, split into a factorisation and a solve so that one factorisation
 * serves every mesh line that shares the same matrix (constant coefficients along a sweep).
 *
 * The system is a[i]·x[i-1] + b[i]·x[i] + c[i]·x[i+1] = d[i], i = 0..n-1 (a[0], c[n-1] unused).
 * The factorisation stores cp[i] = c[i]/m[i] and inv[i] = 1/m[i], with
 * m[i] = b[i] − a[i]·cp[i-1]. It is stable without pivoting for the diagonally dominant
 * matrices I − θτA that implicit diffusion produces.
 */
export function factorTridiagonal(a: Float64Array, b: Float64Array, c: Float64Array,
                                  cp: Float64Array, inv: Float64Array, n: number): void {
  let m = b[0];
  inv[0] = 1 / m;
  cp[0] = c[0] * inv[0];
  for (let i = 1; i < n; i++) {
    m = b[i] - a[i] * cp[i - 1];
    inv[i] = 1 / m;
    cp[i] = c[i] * inv[i];
  }
}

/** Solves with a factorisation from `factorTridiagonal`; `d` is overwritten by the solution. */
function solveFactored(a: Float64Array, cp: Float64Array, inv: Float64Array,
                              d: Float64Array, n: number): Float64Array {
  d[0] *= inv[0];
  for (let i = 1; i < n; i++) d[i] = (d[i] - a[i] * d[i - 1]) * inv[i];
  for (let i = n - 2; i >= 0; i--) d[i] -= cp[i] * d[i + 1];
  return d;
}

/** Solves a·x[i-1] + b·x[i] + c·x[i+1] = d in place; `scratch` holds 2n values. */
export function solveTridiagonal(a: Float64Array, b: Float64Array, c: Float64Array,
                                 d: Float64Array, scratch: Float64Array, n: number): Float64Array {
  const cp = scratch.subarray(0, n);
  const inv = scratch.subarray(n, 2 * n);
  factorTridiagonal(a, b, c, cp, inv, n);
  return solveFactored(a, cp, inv, d, n);
}
