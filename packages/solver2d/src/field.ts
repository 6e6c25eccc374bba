import ndarray, { type NdArray } from 'ndarray';
import type { Mesh } from './mesh.ts';
import type { Simulation } from './simulate.ts';

/**
 * The result field as ndarray views of shape [nz, nx] (z rows, x contiguous) over the
 * simulation's own buffers: net doping (donors − acceptors, substrate included) and each
 * diffused species, cm^-3.
 */
export interface Field {
  mesh: Mesh;
  /** layer names in file order: "net", then the species */
  names: string[];
  layers: Record<string, NdArray<Float64Array>>;
  donors: Float64Array;
  acceptors: Float64Array;
}

export function buildField(sim: Simulation): Field {
  const { mesh, substrate, species } = sim.plan;
  const cells = mesh.nx * mesh.nz;
  const donors = new Float64Array(cells);
  const acceptors = new Float64Array(cells);
  (substrate.type === 'donor' ? donors : acceptors).fill(substrate.concentrationCm3);
  for (const s of species) {
    const c = sim.concentration[s.name];
    const target = s.type === 'donor' ? donors : acceptors;
    for (let k = 0; k < cells; k++) target[k] += c[k];
  }
  const net = new Float64Array(cells);
  for (let k = 0; k < cells; k++) net[k] = donors[k] - acceptors[k];
  const shape = [mesh.nz, mesh.nx];
  const layers: Record<string, NdArray<Float64Array>> = { net: ndarray(net, shape) };
  for (const s of species) layers[s.name] = ndarray(sim.concentration[s.name], shape);
  return { mesh, names: ['net', ...species.map((s) => s.name)], layers, donors, acceptors };
}

/** All layers stacked into one [layers, nz, nx] buffer, for a file or a worker message. */
export function stackLayers(field: Field): Float64Array {
  const cells = field.mesh.nx * field.mesh.nz;
  const out = new Float64Array(field.names.length * cells);
  field.names.forEach((name, k) => out.set(field.layers[name].data, k * cells));
  return out;
}
