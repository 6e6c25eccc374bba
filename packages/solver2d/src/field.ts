import ndarray, { type NdArray } from 'ndarray';
import type { Mesh } from './mesh.ts';
import { fullAxes, unfoldedVolume, type Space3d } from './space3d.ts';
import type { Simulation } from './simulate.ts';

/**
 * The result field as ndarray views of shape [nz, nx] (z rows, x contiguous) over the
 * simulation's own buffers: net doping (donors − acceptors, substrate included, active parts
 * only), each diffused species' total, then the active part of each species that has an
 * inactive part somewhere (activation.ts), cm^-3.
 */
export interface Field {
  mesh: Mesh;
  /** layer names in file order: "net", then the species */
  names: string[];
  layers: Record<string, NdArray<Float64Array>>;
  donors: Float64Array;
  acceptors: Float64Array;
  /** a 3D solve's domain: the layers are then [nz, ny, nx] on its solved part (analyze3d.ts) */
  space?: Space3d | null;
}

export function buildField(sim: Simulation): Field {
  const { mesh, substrate, species } = sim.plan;
  const cells = mesh.nx * mesh.nz;
  const donors = new Float64Array(cells);
  const acceptors = new Float64Array(cells);
  (substrate.type === 'donor' ? donors : acceptors).fill(substrate.concentrationCm3);
  // Only the active part of a species counts in the net doping (activation.ts).
  for (const s of species) addInto(s.type === 'donor' ? donors : acceptors, sim.active[s.name] ?? sim.concentration[s.name]);
  const net = new Float64Array(cells);
  difference(net, donors, acceptors);
  const shape = [mesh.nz, mesh.nx];
  const layers: Record<string, NdArray<Float64Array>> = { net: ndarray(net, shape) };
  for (const s of species) layers[s.name] = ndarray(sim.concentration[s.name], shape);
  const names = ['net', ...species.map((s) => s.name)];
  for (const s of species) {
    if (!sim.active[s.name] || !hasInactive(sim.concentration[s.name], sim.active[s.name])) continue;
    names.push(activeLayerName(s.name));
    layers[activeLayerName(s.name)] = ndarray(sim.active[s.name], shape);
  }
  return { mesh, names, layers, donors, acceptors };
}

/**
 * The layer of a species' active part, after the totals (a space cannot be in a dopant's
 * name, so it cannot meet one).
 */
export function activeLayerName(species: string): string {
  return `${species} active`;
}

// The loops over every node, each a function of its own: compiled as part of buildField,
// which a worker thread calls a few times a run, they took a recompilation and a deoptimisation
// of the whole at nearly every call.

/** Whether some node holds an inactive part (active below total by more than rounding). */
function hasInactive(total: Float64Array, active: Float64Array): boolean {
  for (let k = 0; k < total.length; k++) if (total[k] - active[k] > 1e-12 * total[k]) return true;
  return false;
}

/** target += c */
function addInto(target: Float64Array, c: Float64Array): void {
  for (let k = 0; k < target.length; k++) target[k] += c[k];
}

/** out = a − b */
function difference(out: Float64Array, a: Float64Array, b: Float64Array): void {
  for (let k = 0; k < out.length; k++) out[k] = a[k] - b[k];
}

/**
 * All layers stacked into one [layers, nz, nx] buffer ([layers, nz, ny, nx] in 3D, the
 * mirrored parts unfolded to the full cross-section), for a file or a worker message.
 */
export function stackLayers(field: Field): Float64Array {
  if (field.space) {
    const { space } = field;
    const axes = fullAxes(space);
    const cells = axes.x.length * axes.y.length * space.mesh.nz;
    const out = new Float64Array(field.names.length * cells);
    field.names.forEach((name, k) => unfoldedVolume(space, field.layers[name].data, out, k * cells));
    return out;
  }
  const cells = field.mesh.nx * field.mesh.nz;
  const out = new Float64Array(field.names.length * cells);
  field.names.forEach((name, k) => out.set(field.layers[name].data, k * cells));
  return out;
}
