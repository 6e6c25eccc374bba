import { describe, expect, it } from 'vitest';
import { FivePointMultigrid } from '../../packages/solver2d/src/multigrid.ts';

/**
 * A five-point finite-volume Poisson problem −∇²u = f on the unit square, built the way the
 * electrostatics builds its systems: x nodes at cell centres between mirror walls (zero normal
 * derivative at x = 0 and 1), z nodes from the surface z = 0 (also a mirror wall) to z = 1,
 * where the bottom row is fixed at u = 0. Control volumes between midpoints of nodes.
 */
interface Problem {
  x: Float64Array;
  z: Float64Array;
  diag: Float64Array;
  tx: Float64Array;
  tz: Float64Array;
  volume: Float64Array;
  fixed: Uint8Array;
}

/** Axis of n cells on [0, 1] with widths growing by `ratio` from both ends toward the middle (1: uniform). */
function gradedEdges(n: number, ratio: number): Float64Array {
  const w = Float64Array.from({ length: n }, (_, i) => ratio ** Math.min(i, n - 1 - i));
  const total = w.reduce((a, b) => a + b, 0);
  const edges = new Float64Array(n + 1);
  for (let i = 0; i < n; i++) edges[i + 1] = edges[i] + w[i] / total;
  edges[n] = 1;
  return edges;
}

function problem(nx: number, nz: number, ratioX: number, ratioZ: number, reaction: (x: number, z: number) => number): Problem {
  const ex = gradedEdges(nx, ratioX);
  const x = Float64Array.from({ length: nx }, (_, i) => 0.5 * (ex[i] + ex[i + 1]));
  const z = gradedEdges(nz - 1, ratioZ);
  const n = nx * nz;
  const diag = new Float64Array(n), tx = new Float64Array(n), tz = new Float64Array(n), volume = new Float64Array(n);
  const fixed = new Uint8Array(n);
  for (let j = 0; j < nz; j++) {
    const zw = (j + 1 < nz ? 0.5 * (z[j + 1] - z[j]) : 0) + (j > 0 ? 0.5 * (z[j] - z[j - 1]) : 0);
    for (let i = 0; i < nx; i++) {
      const k = j * nx + i;
      const xw = ex[i + 1] - ex[i];
      volume[k] = xw * zw;
      if (i + 1 < nx) tx[k] = zw / (x[i + 1] - x[i]);
      if (j + 1 < nz) tz[k] = xw / (z[j + 1] - z[j]);
      fixed[k] = j === nz - 1 ? 1 : 0;
    }
  }
  for (let k = 0; k < n; k++) {
    const i = k % nx;
    const j = (k - i) / nx;
    diag[k] = tx[k] + tz[k] + (i > 0 ? tx[k - 1] : 0) + (j > 0 ? tz[k - nx] : 0) + volume[k] * reaction(x[i], z[j]);
  }
  return { x, z, diag, tx, tz, volume, fixed };
}

/** u = cos(πx)·cos(πz/2): zero normal derivative at x = 0, 1 and z = 0, zero at z = 1; −∇²u = (5π²/4)·u (closed form). */
const exact = (x: number, z: number) => Math.cos(Math.PI * x) * Math.cos((Math.PI * z) / 2);
const SOURCE_FACTOR = (5 * Math.PI ** 2) / 4;

function solveSine(nx: number, nz: number, ratioX: number, ratioZ: number): { error: number; iterations: number; levels: number } {
  const p = problem(nx, nz, ratioX, ratioZ, () => 0);
  const b = new Float64Array(nx * nz);
  for (let j = 0; j < nz; j++) for (let i = 0; i < nx; i++) b[j * nx + i] = p.volume[j * nx + i] * SOURCE_FACTOR * exact(p.x[i], p.z[j]);
  const mg = new FivePointMultigrid(p.x, nz, p.fixed);
  mg.setup(p.diag, p.tx, p.tz);
  const u = new Float64Array(nx * nz);
  const iterations = mg.solve(b, u, 1e-10);
  let error = 0;
  for (let j = 0; j < nz; j++) for (let i = 0; i < nx; i++) error = Math.max(error, Math.abs(u[j * nx + i] - exact(p.x[i], p.z[j])));
  return { error, iterations, levels: mg.depth };
}

describe('five-point multigrid-preconditioned conjugate gradients', () => {
  it('solves a 2D Poisson problem to the closed form at second order, on uniform and stretched meshes', () => {
    for (const [rx, rz] of [[1, 1], [1.08, 1.06]] as const) {
      // The growth per cell's square root on the finer mesh: each cell of the coarser one halved (nearly).
      const coarse = solveSine(40, 41, rx, rz);
      const fine = solveSine(80, 81, Math.sqrt(rx), Math.sqrt(rz));
      console.log(`mesh growth ${rx}/${rz}: max error ${coarse.error.toExponential(2)} (40 × 41), ${fine.error.toExponential(2)} (80 × 81), ratio ${(coarse.error / fine.error).toFixed(2)}`);
      // Second-order finite volumes: halving h divides the error by ~4 (closed form above).
      expect(coarse.error / fine.error).toBeGreaterThan(3.2);
      expect(coarse.error / fine.error).toBeLessThan(4.8);
      expect(fine.error).toBeLessThan(rx === 1 ? 2e-4 : 1e-3);
    }
  });

  it('keeps its iteration count nearly flat as the grid doubles, with stretched cells', () => {
    const counts: number[] = [];
    for (const size of [32, 64, 128, 256]) {
      const r = solveSine(size, size + 1, 1.04 ** (64 / size), 1.03 ** (64 / size));
      counts.push(r.iterations);
      console.log(`grid ${size} × ${size + 1}: ${r.iterations} CG iterations to 1e-10, ${r.levels} levels`);
    }
    expect(Math.max(...counts)).toBeLessThanOrEqual(counts[0] + 4);
  });

  it('solves a system whose diagonal jumps by ten orders of magnitude (neutral and depleted silicon side by side)', () => {
    const nx = 120, nz = 61;
    const p = problem(nx, nz, 1.05, 1.05, (x, z) => (x < 0.4 && z < 0.3 ? 1e10 : z > 0.7 ? 1e6 : 0));
    const b = new Float64Array(nx * nz);
    for (let k = 0; k < b.length; k++) b[k] = p.fixed[k] ? 0 : p.volume[k] * Math.sin(7 * k);
    const mg = new FivePointMultigrid(p.x, nz, p.fixed);
    mg.setup(p.diag, p.tx, p.tz);
    const u = new Float64Array(nx * nz);
    const iterations = mg.solve(b, u, 1e-10);
    let res = 0, norm = 0;
    for (let k = 0; k < b.length; k++) {
      if (p.fixed[k]) continue;
      // (A·u)_k from the five-point rows (the bottom row is fixed at zero).
      const i = k % nx;
      let au = p.diag[k] * u[k] - p.tz[k] * u[k + nx];
      if (i > 0) au -= p.tx[k - 1] * u[k - 1];
      if (i + 1 < nx) au -= p.tx[k] * u[k + 1];
      if (k >= nx) au -= p.tz[k - nx] * u[k - nx];
      res = Math.max(res, Math.abs(au - b[k]));
      norm = Math.max(norm, Math.abs(b[k]));
    }
    console.log(`jumping diagonal: ${iterations} CG iterations, residual ${(res / norm).toExponential(2)} of the right-hand side`);
    // The residual of the system itself, ‖A·u − b‖∞ / ‖b‖∞ (the definition of a solution).
    expect(res / norm).toBeLessThan(1e-6);
    expect(iterations).toBeLessThan(40);
  });
});
