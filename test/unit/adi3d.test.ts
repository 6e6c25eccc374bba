import { describe, expect, it } from 'vitest';
import { AdiStepper } from '../../packages/solver2d/src/adi.ts';
import { AdiStepper3d } from '../../packages/solver2d/src/adi3d.ts';
import { columnAt, crossings, surfaceCrossing, wallPaddedGrid } from '../../packages/solver2d/src/junction.ts';
import { buildMask } from '../../packages/solver2d/src/mask.ts';
import { buildMesh } from '../../packages/solver2d/src/mesh.ts';
import { buildMask3d, buildMesh3d } from '../../packages/solver2d/src/mesh3d.ts';
import { junctionDepthUnder, planeGrid, reachAlong } from '../../packages/solver2d/src/reach3d.ts';
import { geometricSteps } from '../../packages/solver2d/src/schedule.ts';
import { axis, solveFilm } from '../support/corner.ts';

const Q = 1e15;
const NB = 1e16;
const DT = 0.1;
const REACH = 1.8;

/** Faces on [0, 2W] mirrored exactly about W from the faces `half` of [0, W]. */
function mirrored(half: Float64Array, w: number): Float64Array {
  const m = half.length - 1;
  const out = new Float64Array(2 * m + 1);
  for (let k = 0; k <= m; k++) {
    out[m - k] = w - half[k];
    out[m + k] = w + half[k];
  }
  return out;
}

function maxAbs(c: Float64Array): number {
  let m = 0;
  for (const v of c) m = Math.max(m, Math.abs(v));
  return m;
}

describe('3D stepper (Douglas–Gunn): symmetry, mirror planes, conservation', () => {
  const W = 4;
  const a = 1.2;
  const half = axis(W, [a], REACH / 12, 1.3 * REACH, REACH / 3);
  const z = axis(3, [0], REACH / 20, 1.3 * REACH, REACH / 5);
  const full = mirrored(half, W);
  const square = solveFilm(full, full, z, [[W - a, W - a, W + a, W + a]], Q, DT);
  const quarter = solveFilm(half, half, z, [[0, 0, a, a]], Q, DT);
  const { nx, ny, nz } = square.mesh;
  const scale = maxAbs(square.c);

  it('a centred square stays mirror-symmetric in x and y and symmetric under x ↔ y, to round-off (exact symmetry of the problem)', () => {
    let worst = 0;
    for (let k = 0; k < nz; k++) {
      for (let j = 0; j < ny; j++) {
        for (let i = 0; i < nx; i++) {
          const v = square.c[(k * ny + j) * nx + i];
          worst = Math.max(worst,
            Math.abs(v - square.c[(k * ny + j) * nx + (nx - 1 - i)]),
            Math.abs(v - square.c[(k * ny + (ny - 1 - j)) * nx + i]),
            Math.abs(v - square.c[(k * ny + i) * nx + j]));
        }
      }
    }
    console.log(`centred square: largest asymmetry ${(worst / scale).toExponential(2)} of the peak`);
    expect(worst / scale).toBeLessThan(1e-12);
  });

  it('the quarter with two mirror planes reproduces the full square to round-off', () => {
    const m = quarter.mesh.nx;
    let worst = 0;
    for (let k = 0; k < nz; k++) {
      for (let j = 0; j < m; j++) {
        for (let i = 0; i < m; i++) {
          worst = Math.max(worst, Math.abs(quarter.c[(k * m + j) * m + i] - square.c[(k * ny + m + j) * nx + m + i]));
        }
      }
    }
    expect(worst / scale).toBeLessThan(1e-12);
  });

  it('a sealed drive-in keeps the dose to 1e-9 (the fluxes cancel face by face)', () => {
    expect(Math.abs(square.contentAtoms / square.placedAtoms - 1)).toBeLessThan(1e-9);
    expect(Math.abs(quarter.contentAtoms / quarter.placedAtoms - 1)).toBeLessThan(1e-9);
  });

  it('a held surface: open cells stay at Cs, no value negative, and the inflow counted is the content gained to 1e-9', () => {
    const mesh = buildMesh3d(half, half, z);
    const mask = buildMask3d(mesh, [[0, 0, a, a]]);
    const stepper = new AdiStepper3d(mesh, mask);
    const c = new Float64Array(mesh.nx * mesh.ny * mesh.nz);
    let entered = 0;
    const cs = 1e19;
    geometricSteps(DT, 1e-4, 1.07).forEach((nu, n) => {
      entered += stepper.holdSurface(c, cs);
      entered += stepper.step(c, nu, n < 3 ? 'split-implicit' : 'douglas-gunn', true);
    });
    for (let p = 0; p < mesh.nx * mesh.ny; p++) if (mask.open[p] === 1) expect(c[p]).toBe(cs);
    let least = Infinity;
    for (const v of c) least = Math.min(least, v);
    expect(least).toBeGreaterThanOrEqual(-1e-9 * cs);
    expect(Math.abs(entered / stepper.content(c) - 1)).toBeLessThan(1e-9);
  });
});

describe('3D stepper with D per node', () => {
  it('with ν the same at every node, stepVariable reproduces step to round-off, held and sealed, both schemes', () => {
    const half = axis(4, [1.2], REACH / 12, 1.3 * REACH, REACH / 3);
    const z = axis(3, [0], REACH / 20, 1.3 * REACH, REACH / 5);
    const mesh = buildMesh3d(half, half, z);
    const mask = buildMask3d(mesh, [[0, 0, 1.2, 1.2]]);
    const a = new AdiStepper3d(mesh, mask);
    const b = new AdiStepper3d(mesh, mask);
    const n = mesh.nx * mesh.ny * mesh.nz;
    const c1 = new Float64Array(n);
    const c2 = new Float64Array(n);
    const nu = new Float64Array(n);
    for (const [held, scheme] of [[true, 'split-implicit'], [true, 'douglas-gunn'], [false, 'douglas-gunn'], [false, 'split-implicit']] as const) {
      for (let s = 0; s < 5; s++) {
        nu.fill(1e-3 * (1 + s));
        if (held) { a.holdSurface(c1, 1e19); b.holdSurface(c2, 1e19); }
        const e1 = a.step(c1, nu[0], scheme, held);
        const e2 = b.stepVariable(c2, nu, scheme, held);
        expect(Math.abs(e2 - e1)).toBeLessThanOrEqual(1e-12 * Math.abs(e1));
      }
      let worst = 0;
      for (let p = 0; p < n; p++) worst = Math.max(worst, Math.abs(c1[p] - c2[p]));
      expect(worst / maxAbs(c1)).toBeLessThan(1e-12);
    }
  });
});

describe('a very long rectangle against the 2D solve of its cross-section', () => {
  // Far from its ends a long window is a 2D problem (translation invariance along y): the 3D
  // solve's middle section must match the 2D stepper's solve on the same x and z meshes.
  const a = 1.2;
  const W = 4;
  const long = 30;
  const xFaces = axis(W, [a], REACH / 40, 1.3 * REACH, REACH / 2);
  const yFaces = axis(long + 4, [long], REACH / 40, 1.3 * REACH, REACH / 2);
  const z = axis(3, [0], REACH / 80, 1.3 * REACH, REACH / 4);
  const three = solveFilm(xFaces, yFaces, z, [[0, 0, a, long]], Q, DT);
  const indicator3 = Float64Array.from(three.c, (v) => Math.log10(Math.max(v, 1)) - Math.log10(NB));

  const mesh2 = buildMesh(xFaces, z);
  const stepper2 = new AdiStepper(mesh2, buildMask(mesh2, [[0, a]]));
  const c2 = new Float64Array(mesh2.nx * mesh2.nz);
  for (let i = 0; i < mesh2.nx; i++) if (mesh2.x[i] < a) c2[i] = Q / (mesh2.dzVolume[0] * 1e-4);
  let h = REACH / 80;
  for (const v of three.mesh.dx) h = Math.min(h, v);
  geometricSteps(DT, 0.25 * h * h, 1.07).forEach((nu, n) => stepper2.step(c2, nu, n < 3 ? 'split-implicit' : 'peaceman-rachford', false, 0));
  const indicator2 = Float64Array.from(c2, (v) => Math.log10(Math.max(v, 1)) - Math.log10(NB));
  const grid2 = wallPaddedGrid(mesh2, indicator2);

  it('junction depth at the centre and lateral reach at the middle of the long edge within 0.5 % of the 2D solve', () => {
    const depth3 = junctionDepthUnder(three.mesh, indicator3, 0, 0)!;
    const depth2 = crossings(columnAt(grid2, 0, new Float64Array(mesh2.nz)), mesh2.z)[0];
    const reach3 = reachAlong(planeGrid(three.mesh, indicator3, 0), a, 0, 1, 0, W - a, REACH / 400)!;
    const reach2 = surfaceCrossing(grid2, a, 1)! - a;
    console.log(`long rectangle: xj 3D ${depth3.toFixed(4)} 2D ${depth2.toFixed(4)}, reach 3D ${reach3.toFixed(4)} 2D ${reach2.toFixed(4)} µm`);
    expect(Math.abs(depth3 / depth2 - 1)).toBeLessThan(0.005);
    expect(Math.abs(reach3 / reach2 - 1)).toBeLessThan(0.005);
  });
});
