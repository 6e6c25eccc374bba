import type { Report } from '@edgewise/solver2d';
import { parseNpy, type NpyArray } from './npy.ts';

/**
 * The electrical rules' cross-sections of a run folder (DEVELOPERS.md): potential, |field|
 * and the depletion indicator of every window and bias, `[windows, biases, nz, nx]` on the
 * electrostatic grid, whose node positions are electrical-x.npy and electrical-z.npy.
 */
export interface ElectricalData {
  biasV: number[];
  windows: number;
  /** node positions, µm */
  x: Float64Array;
  z: Float64Array;
  potentialV: Float64Array;
  fieldVPerCm: Float64Array;
  /** majority carriers over |net doping| − ½: the depletion edge is its zero contour */
  depletion: Float64Array;
}

export const ELECTRICAL_FILES = {
  potential: 'electrical-potential.npy',
  field: 'electrical-field.npy',
  depletion: 'electrical-depletion.npy',
  x: 'electrical-x.npy',
  z: 'electrical-z.npy',
} as const;

/** Reads the files and checks their shapes against the report; throws `fail(file, reason)`' error. */
export async function loadElectrical(report: Report, read: (name: string) => Promise<ArrayBuffer>, fail: (name: string, reason: string) => Error): Promise<ElectricalData | undefined> {
  const e = report.electrical;
  if (!e) return undefined;
  const names = [ELECTRICAL_FILES.potential, ELECTRICAL_FILES.field, ELECTRICAL_FILES.depletion, ELECTRICAL_FILES.x, ELECTRICAL_FILES.z];
  const arrays: NpyArray[] = [];
  for (const name of names) {
    const buffer = await read(name);
    try {
      arrays.push(parseNpy(buffer));
    } catch (err) {
      throw fail(name, (err as Error).message);
    }
  }
  const [potential, field, depletion, x, z] = arrays;
  const shape = [e.windows.length, e.biasV.length, e.mesh.rows, e.mesh.columns];
  for (const [k, a] of [potential, field, depletion].entries()) {
    if (a.shape.join() !== shape.join()) throw fail(names[k], `has shape [${a.shape.join(', ')}], report.json's electrical part says [${shape.join(', ')}]`);
  }
  if (x.data.length !== e.mesh.columns) throw fail(ELECTRICAL_FILES.x, `holds ${x.data.length} values, the grid has ${e.mesh.columns} columns`);
  if (z.data.length !== e.mesh.rows) throw fail(ELECTRICAL_FILES.z, `holds ${z.data.length} values, the grid has ${e.mesh.rows} rows`);
  return { biasV: [...e.biasV], windows: e.windows.length, x: x.data, z: z.data, potentialV: potential.data, fieldVPerCm: field.data, depletion: depletion.data };
}
