import type { Mesh } from './mesh.ts';
import { conductivitySPerCm, type MobilityFit } from './mobility.ts';
import type { Regions } from './region.ts';
import { UM_TO_CM } from './units.ts';

/**
 * Sheet and line resistance of a diffused layer, isolated from the substrate by its junction.
 *
 * Sheet conductance of a column (J.C. Irvin, Bell Syst. Tech. J. 41 (1962) 387):
 *   1/Rs = ∫₀^xj q·μ(N_D + N_A)·|N_D − N_A| dz        (Ω/sq)
 * Conductance per unit length of a long line whose cross-section is the region A:
 *   G' = ∬_A q·μ·|N_net| dx dz,   R' = 1/G'           (Ω/µm)
 * and its effective electrical width W_eff = G'·Rs: the width a layer with the sheet
 * resistance of the window centre would need to carry the same current.
 */

/**
 * Sheet conductance (S per square) of a column profile from the surface to `toDepthUm`
 * (the junction): the surface layer (see layerConductanceS).
 */
export function sheetConductanceS(donors: ArrayLike<number>, acceptors: ArrayLike<number>, z: ArrayLike<number>,
                                  toDepthUm: number, fit: MobilityFit): number {
  return layerConductanceS(donors, acceptors, z, 0, toDepthUm, Math.sign(donors[0] - acceptors[0]), fit);
}

/**
 * Sheet conductance (S per square) of the layer of a column profile between the depths
 * `fromUm` and `toUm` (junctions, or the surface), whose net doping has the sign `sign`
 * (+1 n-type, −1 p-type), by the trapezoidal rule on the nodes. The partial intervals at
 * either end run to the doping interpolated there, counted only while it is of the layer's
 * type: about zero at a graded junction, the full value where a layer ends abruptly.
 */
export function layerConductanceS(donors: ArrayLike<number>, acceptors: ArrayLike<number>, z: ArrayLike<number>,
                                  fromUm: number, toUm: number, sign: number, fit: MobilityFit): number {
  const sigma = (nd: number, na: number) => (Math.sign(nd - na) === sign ? conductivitySPerCm(nd - na, nd + na, fit) : 0);
  const at = (depth: number, j: number) => {
    const t = (depth - z[j - 1]) / (z[j] - z[j - 1]);
    return sigma((1 - t) * donors[j - 1] + t * donors[j], (1 - t) * acceptors[j - 1] + t * acceptors[j]);
  };
  let j = 1;
  while (j < z.length && z[j] <= fromUm) j++;
  if (j >= z.length || !(toUm > fromUm)) return 0;
  let prevZ = fromUm;
  let prevS = fromUm <= z[0] ? sigma(donors[0], acceptors[0]) : at(fromUm, j);
  let sum = 0;
  for (; j < z.length; j++) {
    if (z[j] >= toUm) {
      sum += 0.5 * (prevS + at(toUm, j)) * (toUm - prevZ);
      break;
    }
    const s = sigma(donors[j], acceptors[j]);
    sum += 0.5 * (prevS + s) * (z[j] - prevZ);
    prevZ = z[j];
    prevS = s;
  }
  return sum * UM_TO_CM;
}

/**
 * Σ σ·ΔA over the nodes of one region, with each node's control volume Δx·Δz:
 * S/cm · µm² (divide into 1e4 for Ω per µm of line length).
 */
export function regionConductance(mesh: Mesh, donors: Float64Array, acceptors: Float64Array,
                                  regions: Regions, label: number, fit: MobilityFit): number {
  const { nx, nz, dx, dzVolume } = mesh;
  let total = 0;
  for (let j = 0; j < nz; j++) {
    let row = 0;
    const base = j * nx;
    for (let i = 0; i < nx; i++) {
      const k = base + i;
      if (regions.labels[k] === label) row += conductivitySPerCm(donors[k] - acceptors[k], donors[k] + acceptors[k], fit) * dx[i];
    }
    total += row * dzVolume[j];
  }
  return total;
}

/** Ω per µm of line: a length ℓ (cm) of a line with ∬σ dA (S·cm) has R = ℓ / ∬σ dA. */
export function lineResistanceOhmPerUm(conductanceSCmUm2: number): number {
  return UM_TO_CM / (conductanceSCmUm2 * UM_TO_CM * UM_TO_CM);
}

/** W_eff = G'·Rs, µm. */
export function effectiveWidthUm(conductanceSCmUm2: number, sheetConductanceSq: number): number {
  return (conductanceSCmUm2 * UM_TO_CM) / sheetConductanceSq;
}
