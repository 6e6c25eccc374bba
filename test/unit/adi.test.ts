import { describe, expect, it } from 'vitest';
import { AdiStepper, type Scheme, type UniformLines } from '../../packages/solver2d/src/adi.ts';
import { buildMask } from '../../packages/solver2d/src/mask.ts';
import { buildMesh, gradedAxis } from '../../packages/solver2d/src/mesh.ts';
import { markUniformLines } from '../support/uniform-lines.ts';

function setup() {
  const rule = { fineUm: 0.05, fineReachUm: 0.5, grade: 0.2, maxUm: 0.4 };
  const mesh = buildMesh(gradedAxis(6, [2, 3.5], [2, 3.5], rule), gradedAxis(3, [], [0], rule));
  const mask = buildMask(mesh, [[2, 3.5]]);
  return { mesh, mask, stepper: new AdiStepper(mesh, mask) };
}

/** A smooth positive field with some structure; a fixed formula, no randomness. */
function field(nx: number, nz: number): Float64Array {
  const c = new Float64Array(nx * nz);
  for (let j = 0; j < nz; j++) for (let i = 0; i < nx; i++) c[j * nx + i] = 1 + Math.sin(0.3 * i) * Math.cos(0.2 * j) + 0.01 * i;
  return c;
}

/**
 * ν varying in space, with the deepest rows and the columns near both side walls at one
 * value (as where no dopant has arrived), those lines marked.
 */
function partlyUniform(c: Float64Array, nx: number, nz: number): { nu: Float64Array; uniform: UniformLines } {
  const background = 0.002;
  const nu = c.map((v) => background + 0.02 * v * v);
  return { nu, uniform: markUniformLines(nu, nx, nz, background, { rowsFrom: Math.floor(nz / 2), left: 9, right: 7 }) };
}

const CASES: [Scheme, boolean][] = [['peaceman-rachford', false], ['peaceman-rachford', true], ['split-implicit', false], ['split-implicit', true]];

describe('ADI stepper', () => {
  for (const [scheme, held] of CASES) {
    it(`${scheme}, ${held ? 'held surface' : 'sealed'}: the variable-D step with uniform ν equals the constant-D step (1e-12)`, () => {
      const { mesh, stepper } = setup();
      const a = field(mesh.nx, mesh.nz);
      const b = a.slice();
      const nu = new Float64Array(a.length).fill(0.013);
      const inA = stepper.step(a, 0.013, scheme, held, 2.5);
      const inB = stepper.stepVariable(b, nu, scheme, held, 2.5);
      let worst = 0;
      for (let k = 0; k < a.length; k++) worst = Math.max(worst, Math.abs(a[k] - b[k]));
      expect(worst).toBeLessThan(1e-12);
      expect(Math.abs(inA - inB)).toBeLessThan(1e-12 * Math.max(1, Math.abs(inA)));
    });

    it(`${scheme}, ${held ? 'held surface' : 'sealed'}: with ν varying in space, content changes only by what enters (1e-12)`, () => {
      // Conservation of the finite-volume scheme: an exact discrete identity.
      const { mesh, stepper } = setup();
      const c = field(mesh.nx, mesh.nz);
      const nu = new Float64Array(c.length);
      for (let k = 0; k < nu.length; k++) nu[k] = 0.002 + 0.02 * c[k] * c[k];
      if (held) stepper.holdSurface(c, 2.5);
      const before = stepper.content(c);
      const entered = stepper.stepVariable(c, nu, scheme, held, 2.5);
      expect(Math.abs(stepper.content(c) - before - entered)).toBeLessThan(1e-12 * before);
      if (!held) expect(entered).toBe(0);
    });

    it(`${scheme}, ${held ? 'held surface' : 'sealed'}: lines marked uniform, solved with the shared factor, give the same step (1e-12) and conserve`, () => {
      // The same equations either way; only the rounding differs.
      const { mesh, stepper } = setup();
      const a = field(mesh.nx, mesh.nz);
      if (held) stepper.holdSurface(a, 2.5);
      const b = a.slice();
      const { nu, uniform } = partlyUniform(a, mesh.nx, mesh.nz);
      const before = stepper.content(a);
      const inA = stepper.stepVariable(a, nu, scheme, held, 2.5);
      const inB = stepper.stepVariable(b, nu, scheme, held, 2.5, uniform);
      let worst = 0;
      for (let k = 0; k < a.length; k++) worst = Math.max(worst, Math.abs(a[k] - b[k]));
      expect(worst).toBeLessThan(1e-12);
      expect(Math.abs(inA - inB)).toBeLessThan(1e-12 * Math.max(1, Math.abs(inA)));
      expect(Math.abs(stepper.content(b) - before - inB)).toBeLessThan(1e-12 * before);
    });
  }
});
