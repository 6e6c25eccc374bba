import { PoissonSolver, poissonMesh, type JunctionProblem, type PoissonMesh } from './electrostatics.ts';

/**
 * The one-dimensional junction below a window centre: the column of net doping from the
 * surface down, the surface layer (to the first sign change) biased against the rest, ohmic
 * contacts at the surface and at the bottom. One column of unit width (1 µm), so the
 * charge per unit length of the solver is the charge per µm² of area.
 */
export function planeProblem(zUm: Float64Array, netCm3: Float64Array): JunctionProblem | null {
  const nz = zUm.length;
  const surface = Math.sign(netCm3[0]);
  if (surface === 0) return null;
  let bottom = 0;
  while (bottom < nz && Math.sign(netCm3[bottom]) === surface) bottom++;
  if (bottom >= nz) return null;
  const mesh: PoissonMesh = poissonMesh(Float64Array.of(0.5), zUm, 0, 1);
  const biased = new Uint8Array(nz);
  const shifted = new Uint8Array(nz);
  const contact = new Uint8Array(nz);
  for (let j = 0; j < nz; j++) {
    biased[j] = j < bottom ? 1 : 0;
    shifted[j] = j < bottom || Math.sign(netCm3[j]) !== surface ? 1 : 0;
  }
  contact[0] = 1;
  contact[nz - 1] = 1;
  return { mesh, net: netCm3, contact, shifted, biased, sign: surface > 0 ? 1 : -1 };
}

/** Capacitance per area of a plane-junction solver, F/cm² (its column is 1 µm wide). */
export function areaCapacitanceFPerCm2(solver: PoissonSolver): number {
  solver.tangent();
  return solver.regionCharge().capacitanceFPerCm / 1e-4;
}
