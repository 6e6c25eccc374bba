/**
 * A film in a rectangle, driven in with constant D, on the 3D stepper directly: the exact
 * separable solution (derived in corner-film.test.ts) and the solve, shared by the 3D tests.
 */
import { AdiStepper3d } from '../../packages/solver2d/src/adi3d.ts';
import { gradedAxis, type SpacingRule } from '../../packages/solver2d/src/mesh.ts';
import { buildMask3d, buildMesh3d, type Mesh3d, type Rectangle } from '../../packages/solver2d/src/mesh3d.ts';
import { geometricSteps } from '../../packages/solver2d/src/schedule.ts';
import { erf } from './closed-forms.ts';

/** Axis with faces (or nodes) on the features inside it, spacing `fine` within `reach` of them, growing 15 % a cell. */
export function axis(length: number, features: number[], fine: number, reach: number, coarsest: number): Float64Array {
  const rule: SpacingRule = { fineUm: fine, fineReachUm: reach, grade: 0.15, maxUm: coarsest };
  return gradedAxis(length, features.filter((f) => f > 0 && f < length), features, rule);
}

export interface CornerSolve {
  mesh: Mesh3d;
  c: Float64Array;
  placedAtoms: number;
  contentAtoms: number;
  timeSteps: number;
}

/**
 * Places the dose (cm^-2) in the open cells of plane 0 (in the surface control volume) and
 * drives it in over ∫D dt = `dt` (µm²): first ν a quarter of the finest spacing squared,
 * growing by `growth`, the first `startup` steps split implicit, the rest Douglas–Gunn.
 */
export function solveFilm(xFaces: Float64Array, yFaces: Float64Array, z: Float64Array, rectangles: Rectangle[],
                          dose: number, dt: number, growth = 1.07, startup = 3): CornerSolve {
  const mesh = buildMesh3d(xFaces, yFaces, z);
  const mask = buildMask3d(mesh, rectangles);
  const stepper = new AdiStepper3d(mesh, mask);
  const c = new Float64Array(mesh.nx * mesh.ny * mesh.nz);
  const value = dose / (mesh.dzVolume[0] * 1e-4);
  for (let p = 0; p < mesh.nx * mesh.ny; p++) if (mask.open[p] === 1) c[p] = value;
  const placedAtoms = stepper.content(c);
  let h = Infinity;
  for (const d of [mesh.dx, mesh.dy]) for (const v of d) h = Math.min(h, v);
  h = Math.min(h, mesh.z[1] - mesh.z[0]);
  const steps = geometricSteps(dt, 0.25 * h * h, growth);
  steps.forEach((nu, n) => stepper.step(c, nu, n < startup ? 'split-implicit' : 'douglas-gunn', false));
  return { mesh, c, placedAtoms, contentAtoms: stepper.content(c), timeSteps: steps.length };
}

/** ½[erf((u − u0)/2√(Dt)) − erf((u − u1)/2√(Dt))] for the window [u0, u1] inside [0, L], summed over the images of the walls at 0 and L (a window from 0 is the half of one mirrored about 0). */
export function windowFactor(u: number, u0: number, u1: number, length: number, dt: number): number {
  const s = 2 * Math.sqrt(dt);
  let f = 0;
  for (let n = -2; n <= 2; n++) {
    for (const us of [u - 2 * n * length, -u - 2 * n * length]) f += 0.5 * (erf((us - u0) / s) - erf((us - u1) / s));
  }
  return f;
}

/** exp(−z²/4Dt) with the image of the bottom wall at H. */
export function depthFactor(z: number, depth: number, dt: number): number {
  return Math.exp(-(z * z) / (4 * dt)) + Math.exp(-((2 * depth - z) ** 2) / (4 * dt));
}
