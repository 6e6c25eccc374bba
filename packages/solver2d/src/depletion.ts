import type { PoissonSolver } from './electrostatics.ts';

/**
 * Depletion edges: where the majority carriers recover to half the net doping,
 * r = majority/|N| − ½ crossing zero, linear in r between nodes (common practice: the
 * half-density point is the usual numerical stand-in for the depletion approximation's
 * sharp edge, within a Debye length of it).
 */

/** r at node k: below 0 depleted, above 0 neutral. */
export function recovery(solver: PoissonSolver, k: number): number {
  const net = solver.problem.net[k];
  if (net === 0) return -0.5;
  const majority = net > 0 ? solver.electrons(solver.psi[k], k, solver.biasV) : solver.holes(solver.psi[k], k, solver.biasV);
  return Math.min(majority / Math.abs(net), 10) - 0.5;
}

/**
 * Depth below the biased region in column i where the carriers recover, µm: scanning down from
 * the first node below the region; null where the column has no biased node or the depletion
 * reaches the bottom.
 */
export function depletionDepthUm(solver: PoissonSolver, i: number): number | null {
  const { nx, nz, z } = solver.problem.mesh;
  const { biased } = solver.problem;
  let j = 0;
  while (j < nz && biased[j * nx + i] !== 1) j++;
  while (j < nz && biased[j * nx + i] === 1) j++;
  if (j === 0 || j >= nz) return null;
  let prev = -0.5;
  let prevZ = z[j - 1];
  for (; j < nz; j++) {
    const r = recovery(solver, j * nx + i);
    if (r >= 0) return prevZ + (z[j] - prevZ) * (-prev / (r - prev));
    prev = r;
    prevZ = z[j];
  }
  return null;
}

/**
 * Largest sideways reach of the depleted zone beyond a mask edge at any depth, µm from the
 * edge: on each row, from the first node past the edge outward while the node is in the
 * biased region or depleted. `direction` −1 scans left of `edgeUm`, +1 right.
 */
export function depletionReachUm(solver: PoissonSolver, edgeUm: number, direction: -1 | 1): number | null {
  const { nx, nz, x } = solver.problem.mesh;
  const { biased } = solver.problem;
  let start = 0;
  while (start < nx && x[start] < edgeUm) start++;
  if (direction < 0) start--;
  if (start < 0 || start >= nx) return null;
  let reach = 0;
  for (let j = 0; j < nz; j++) {
    let prev = 0.5;
    let prevX = edgeUm;
    let inside = true;
    for (let i = start; i >= 0 && i < nx; i += direction) {
      const k = j * nx + i;
      if (biased[k] === 1) { prev = -0.5; prevX = x[i]; continue; }
      const r = recovery(solver, k);
      if (r >= 0) {
        const at = prev < 0 ? prevX + (x[i] - prevX) * (-prev / (r - prev)) : edgeUm;
        reach = Math.max(reach, direction * (at - edgeUm));
        inside = false;
        break;
      }
      prev = r;
      prevX = x[i];
    }
    // Depleted up to the wall: the reach is not inside the cross-section.
    if (inside && prev < 0) return null;
  }
  return reach;
}
