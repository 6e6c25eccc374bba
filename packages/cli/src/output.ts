import { join } from 'node:path';
import type { Analysis } from '@edgewise/solver2d';
import { fullAxes, stackLayers } from '@edgewise/solver2d';
import { encodeNpy, inside, writeAtomic } from './files.ts';
import { planSvg } from './plan-svg.ts';
import { contourSvg } from './svg.ts';

/** The files of the electrical rules' cross-sections (DEVELOPERS.md), in a run folder whose recipe has `electrical`. */
export const ELECTRICAL_FILES = {
  potential: 'electrical-potential.npy',
  field: 'electrical-field.npy',
  depletion: 'electrical-depletion.npy',
  x: 'electrical-x.npy',
  z: 'electrical-z.npy',
} as const;

/**
 * The files of one run folder (contracts in DEVELOPERS.md): `dir` inside the output folder
 * `root`, which no file may leave (files.ts, inside). Returns the names written.
 */
export function writeRunFolder(root: string, analysis: Analysis, dir = ''): string[] {
  const { report, field } = analysis;
  const { mesh } = field;
  const written: string[] = [];
  const put = (name: string, data: string | Uint8Array) => {
    writeAtomic(inside(root, join(dir, name)), data);
    written.push(name);
  };
  if (field.space) {
    // 3D: the full plan view (mirrored parts unfolded), [layers, nz, ny, nx], and y beside x and z.
    const axes = fullAxes(field.space);
    put('field.npy', encodeNpy(speciesNeverNegative(stackLayers(field), field.names.length), [field.names.length, mesh.nz, axes.y.length, axes.x.length]));
    put('x.npy', encodeNpy(axes.x, [axes.x.length]));
    put('y.npy', encodeNpy(axes.y, [axes.y.length]));
    put('z.npy', encodeNpy(mesh.z, [mesh.nz]));
    put('plan.svg', planSvg(report));
    put('report.json', `${JSON.stringify(report, null, 2)}\n`);
    return written;
  }
  put('field.npy', encodeNpy(speciesNeverNegative(stackLayers(field), field.names.length), [field.names.length, mesh.nz, mesh.nx]));
  put('x.npy', encodeNpy(mesh.x, [mesh.nx]));
  put('z.npy', encodeNpy(mesh.z, [mesh.nz]));
  put('contour.csv', contourCsv(analysis));
  put('contour.svg', contourSvg(report));
  const e = analysis.electricalFields;
  if (e) {
    // The electrical rules' cross-sections, [windows, biases, nz, nx] on their own grid.
    put(ELECTRICAL_FILES.potential, encodeNpy(e.potentialV, e.shape));
    put(ELECTRICAL_FILES.field, encodeNpy(e.fieldVPerCm, e.shape));
    put(ELECTRICAL_FILES.depletion, encodeNpy(e.depletion, e.shape));
    put(ELECTRICAL_FILES.x, encodeNpy(e.x, [e.x.length]));
    put(ELECTRICAL_FILES.z, encodeNpy(e.z, [e.z.length]));
  }
  // The report last: its presence marks a complete folder.
  put('report.json', `${JSON.stringify(report, null, 2)}\n`);
  return written;
}

/**
 * Species layers (every layer after the first, net doping, which is signed) with negative
 * values set to 0, in place. The stepper conserves dose, and its sweeps can leave round-off
 * of either sign where a profile falls steeply to nothing (down to −4e-14 of the peak after an
 * arsenic implant's anneal); a concentration is never negative, so the file says 0 there.
 */
export function speciesNeverNegative(stacked: Float64Array, layers: number): Float64Array {
  for (let k = stacked.length / layers; k < stacked.length; k++) if (stacked[k] < 0) stacked[k] = 0;
  return stacked;
}

export function contourCsv({ report }: Analysis): string {
  const lines = ['junction,point,xUm,zUm'];
  report.junctions.forEach((junction, k) => {
    let point = 0;
    for (const line of junction.polylinesUm) for (const [x, z] of line) lines.push(`${k},${point++},${x},${z}`);
  });
  return `${lines.join('\n')}\n`;
}
