import fc from 'fast-check';
import { describe, it } from 'vitest';
import { AdiStepper, type Scheme } from '../../packages/solver2d/src/adi.ts';
import { buildMask, type Mask } from '../../packages/solver2d/src/mask.ts';
import { buildMesh, type Mesh } from '../../packages/solver2d/src/mesh.ts';
import { check, logUniform, printCountsAfterAll, uniform } from './support.ts';
import { markUniformLines } from '../support/uniform-lines.ts';

/**
 * Invariants of one ADI time step, on generated meshes and fields: the finite-volume scheme
 * conserves what it holds, keeps a mirror-symmetric problem symmetric, carries a NaN or Inf
 * from anywhere in the field to the bottom row, which is all simulate.ts's guard looks at, and
 * gives the same step where lines of uniform ν take the shared factors.
 * A step costs microseconds here, so each property gets 10,000 cases.
 */
printCountsAfterAll('stepper.test.ts');

const SCHEMES: Scheme[] = ['split-implicit', 'peaceman-rachford'];

interface Problem {
  mesh: Mesh;
  mask: Mask;
  stepper: AdiStepper;
}

/**
 * Faces of a graded axis on [0, length]: 3 to 40 cells, each 0.6 to 1.6 times its neighbour
 * (plan.ts grades by 15 % a cell; this is rougher on purpose). Drawn cell by cell rather than
 * by mesh.ts's gradedAxis, which costs half a millisecond a call.
 */
const axis = (length: number) => fc.array(uniform(0.6, 1.6), { minLength: 3, maxLength: 40 }).map((ratios) => {
  const widths = [1];
  for (let k = 1; k < ratios.length; k++) widths.push(widths[k - 1] * ratios[k]);
  const total = widths.reduce((a, b) => a + b, 0);
  const faces = new Float64Array(widths.length + 1);
  for (let k = 0; k < widths.length; k++) faces[k + 1] = faces[k] + (widths[k] / total) * length;
  faces[widths.length] = length;
  return faces;
});

/** One or two windows as fractions of the width, ordered and apart (a wall counts as an edge). */
const wall = (inner: number, outer: number) => fc.oneof(fc.constant(outer), uniform(Math.min(inner, outer), Math.max(inner, outer)));
const windowFractions = fc.oneof(
  fc.tuple(wall(0.45, 0), wall(0.55, 1)).map(([a, b]) => [[a, b]]),
  fc.tuple(wall(0.2, 0), uniform(0.3, 0.45), uniform(0.55, 0.7), wall(0.8, 1)).map(([a, b, c, d]) => [[a, b], [c, d]]),
);

function problem(xFaces: Float64Array, z: Float64Array, fractions: number[][]): Problem {
  const widthUm = xFaces[xFaces.length - 1];
  const mesh = buildMesh(xFaces, z);
  const mask = buildMask(mesh, fractions.map(([a, b]) => [a * widthUm, b * widthUm] as [number, number]));
  return { mesh, mask, stepper: new AdiStepper(mesh, mask) };
}

const problems = fc.record({ widthUm: uniform(1, 10), depthUm: uniform(0.5, 5) }).chain(({ widthUm, depthUm }) =>
  fc.tuple(axis(widthUm), axis(depthUm), windowFractions).map(([x, z, w]) => problem(x, z, w)));

/**
 * A step: scheme, and ν as a multiple of the finest cell squared, from 1e-3 (gentle) to 1e3
 * (stiffer than the last steps of a default run, about 30: 0.07·t·D over (xj/80)² with
 * D·t ≈ (xj/4)², plan.ts and simulate.ts).
 */
const steps = fc.array(fc.record({ scheme: fc.constantFrom(...SCHEMES), meshNumber: logUniform(1e-3, 1e3), variable: fc.boolean() }), { minLength: 1, maxLength: 5 });

function finest(mesh: Mesh): number {
  let h = Infinity;
  for (let i = 0; i < mesh.nx; i++) h = Math.min(h, mesh.dx[i]);
  for (let j = 1; j < mesh.nz; j++) h = Math.min(h, mesh.z[j] - mesh.z[j - 1]);
  return h;
}

/** A non-negative field from a seed: smooth part, sharp part, and exact zeros, like a profile after a source. */
function field(mesh: Mesh, seed: number): Float64Array {
  const c = new Float64Array(mesh.nx * mesh.nz);
  let s = seed >>> 0 || 1;
  const next = () => ((s = (s * 1664525 + 1013904223) >>> 0) / 2 ** 32);
  for (let k = 0; k < c.length; k++) {
    const r = next();
    c[k] = r < 0.2 ? 0 : r < 0.4 ? 1e20 * next() : 1e15 * (1 + next());
  }
  return c;
}

function nodeNu(nu: number, c: Float64Array): Float64Array {
  // Concentration-dependent ν, as the charged-defect model makes it: up to 4× where C is
  // high, from C clipped at 0 (simulate.ts clips the same way). Larger contrasts with large
  // steps are where Peaceman–Rachford stops being stable, which simulate.ts avoids by step size.
  const out = new Float64Array(c.length);
  for (let k = 0; k < c.length; k++) out[k] = nu * (1 + 3 * Math.min(1, Math.max(0, c[k]) / 1e20));
  return out;
}

/** Σ|C|·V: the scale against which rounding in the content is measured. */
function absoluteContent(stepper: AdiStepper, c: Float64Array): number {
  return stepper.content(c.map(Math.abs));
}

describe('one ADI step on generated meshes and fields', () => {
  it('content is conserved with the surface sealed, and changes by exactly what enters with it held (1e-11 relative)', () => {
    // The finite-volume fluxes cancel in pairs and the walls are zero-flux: exact in exact
    // arithmetic. Rounding adds about N·ε ≈ 2e-13 per step for N ≤ 2000 cells; five steps
    // stay below 1e-12, so 1e-11 has a margin and still sees a single lost boundary flux.
    check('stepper: content conserved', fc.tuple(problems, steps, fc.integer(), fc.boolean(), logUniform(1e15, 1e21)),
      ([{ mesh, stepper }, plan, seed, held, surface]) => {
        const c = field(mesh, seed);
        const h = finest(mesh);
        let entered = held ? stepper.holdSurface(c, surface) : 0;
        const start = stepper.content(c) - entered;
        for (const { scheme, meshNumber, variable } of plan) {
          const nu = meshNumber * h * h;
          entered += variable ? stepper.stepVariable(c, nodeNu(nu, c), scheme, held, surface) : stepper.step(c, nu, scheme, held, surface);
        }
        const end = stepper.content(c);
        const scale = Math.max(start, absoluteContent(stepper, c));
        if (!(Math.abs(end - start - entered) <= 1e-11 * scale)) {
          throw new Error(`content ${start} → ${end}, entered ${entered}: off by ${(Math.abs(end - start - entered) / scale).toExponential(2)} relative`);
        }
        if (!held && entered !== 0) throw new Error(`a sealed surface let ${entered} in`);
      }, 10_000);
  });

  it('a mirror-symmetric mesh, mask and field stay symmetric (to 64ε·Σ(1 + 4·mesh number) of the largest value)', () => {
    // Mirror faces are W − f exactly; cell widths and centres then agree to rounding. Each
    // line solve is backward stable (Thomas on a diagonally dominant M-matrix I + νA, whose
    // inverse has ∞-norm ≤ 1), so its forward error is at most its condition number,
    // about 1 + 4·ν/h², times a few ε: the bound sums that over the steps with a factor 64
    // to spare. For the gentlest steps it is 1e-14; a full solve's 1e-12 is checked in invariants.test.ts.
    const symmetric = fc.record({ widthUm: uniform(1, 10), depthUm: uniform(0.5, 5) }).chain(({ widthUm, depthUm }) =>
      fc.tuple(axis(widthUm / 2), axis(depthUm), fc.nat()).map(([left, z, pick]) => {
        const half = widthUm / 2;
        // The left half's faces, then their mirror images W − f; the window edge is one of the faces.
        const faces = new Float64Array(2 * left.length - 1);
        for (let k = 0; k < left.length; k++) {
          faces[k] = left[k];
          faces[faces.length - 1 - k] = widthUm - left[k];
        }
        faces[left.length - 1] = half;
        const edge = left[pick % (left.length - 1)];
        const mesh = buildMesh(faces, z);
        const mask = buildMask(mesh, [[edge, widthUm - edge]]);
        return { mesh, mask, stepper: new AdiStepper(mesh, mask) };
      }));
    check('stepper: mirror symmetry', fc.tuple(symmetric, steps, fc.integer(), fc.boolean()), ([{ mesh, mask, stepper }, plan, seed, held]) => {
      for (let i = 0; i < mesh.nx; i++) if (mask.open[i] !== mask.open[mesh.nx - 1 - i]) throw new Error('test set-up: the mask is not symmetric');
      const c = field(mesh, seed);
      for (let j = 0; j < mesh.nz; j++) for (let i = 0; i < mesh.nx / 2; i++) c[j * mesh.nx + mesh.nx - 1 - i] = c[j * mesh.nx + i];
      const h = finest(mesh);
      if (held) stepper.holdSurface(c, 1e20);
      let bound = 0;
      for (const { scheme, meshNumber, variable } of plan) {
        const nu = meshNumber * h * h;
        if (variable) stepper.stepVariable(c, nodeNu(nu, c), scheme, held, 1e20);
        else stepper.step(c, nu, scheme, held, 1e20);
        bound += 64 * Number.EPSILON * (1 + 4 * meshNumber * (variable ? 4 : 1));
      }
      let top = 0;
      let worst = 0;
      for (let j = 0; j < mesh.nz; j++) {
        for (let i = 0; i < mesh.nx; i++) {
          top = Math.max(top, Math.abs(c[j * mesh.nx + i]));
          worst = Math.max(worst, Math.abs(c[j * mesh.nx + i] - c[j * mesh.nx + mesh.nx - 1 - i]));
        }
      }
      if (!(worst <= bound * top)) throw new Error(`asymmetry ${(worst / top).toExponential(2)} of the largest value, above ${bound.toExponential(2)}`);
    }, 10_000);
  });

  it('lines of uniform ν solved with the shared factors give the line-by-line step (to 64ε·(1 + 16·mesh number)) and conserve', () => {
    // simulate.ts marks the rows and columns where ν is the background's; the stepper then
    // solves flat lines, and flat runs at the ends of the others, with shared factors. The
    // equations are the same, eliminated in another order, so the results agree to the line
    // solves' forward error (see the symmetry bound above). Marked: the rows from a drawn
    // depth down, runs of columns at both walls, and a few columns drawn anywhere.
    const marks = fc.record({ fromRow: uniform(0, 1), leftRun: uniform(0, 0.5), rightRun: uniform(0, 0.5), scattered: fc.array(uniform(0, 1), { maxLength: 3 }) });
    check('stepper: uniform lines', fc.tuple(problems, marks, fc.integer(), fc.constantFrom(...SCHEMES), fc.boolean(), logUniform(1e-3, 1e3)),
      ([{ mesh, stepper }, mark, seed, scheme, held, meshNumber]) => {
        const { nx, nz } = mesh;
        const a = field(mesh, seed);
        if (held) stepper.holdSurface(a, 1e20);
        const b = a.slice();
        const background = meshNumber * finest(mesh) ** 2;
        const nu = nodeNu(background, a);
        const uniform = markUniformLines(nu, nx, nz, background, {
          rowsFrom: Math.floor(mark.fromRow * nz), left: Math.floor(mark.leftRun * nx), right: Math.floor(mark.rightRun * nx),
          columns: mark.scattered.map((f) => Math.min(nx - 1, Math.floor(f * nx))),
        });
        const before = stepper.content(a);
        const inA = stepper.stepVariable(a, nu, scheme, held, 1e20);
        const inB = stepper.stepVariable(b, nu, scheme, held, 1e20, uniform);
        let top = 0;
        let worst = 0;
        for (let k = 0; k < a.length; k++) {
          top = Math.max(top, Math.abs(a[k]));
          worst = Math.max(worst, Math.abs(a[k] - b[k]));
        }
        const bound = 64 * Number.EPSILON * (1 + 16 * meshNumber);
        if (!(worst <= bound * top)) throw new Error(`the shared factors moved the step by ${(worst / top).toExponential(2)} of the largest value, above ${bound.toExponential(2)}`);
        const scale = Math.max(before, absoluteContent(stepper, b));
        if (!(Math.abs(stepper.content(b) - before - inB) <= 1e-11 * scale)) throw new Error('content not conserved with the shared factors');
        if (!(Math.abs(inA - inB) <= 1e-11 * scale)) throw new Error(`inflow ${inA} line by line, ${inB} with the shared factors`);
      }, 10_000);
  });

  it('a NaN or Inf anywhere reaches the bottom row within one step (what the guard checks)', () => {
    // simulate.ts's guardFinite looks only at the bottom row after each step; that is enough
    // only if every non-finite value, wherever it is, gets there in one step. A held surface
    // node is overwritten by the held value before the step (as simulate.ts does), so a bad
    // value there is gone, not hidden: the property is "non-finite anywhere ⇔ bottom row not finite".
    const bad = fc.constantFrom(Number.NaN, Infinity, -Infinity);
    // With variable ν, the deepest rows and the columns at both walls may be marked uniform
    // (as simulate.ts marks them where no dopant has arrived), so that the shared factors carry it too.
    check('stepper: non-finite reaches the bottom row', fc.tuple(problems, fc.integer(), bad, fc.nat(), fc.constantFrom(...SCHEMES), fc.boolean(), fc.boolean(), logUniform(1e-3, 1e3), fc.boolean()),
      ([{ mesh, mask, stepper }, seed, value, where, scheme, held, variable, meshNumber, marked]) => {
        const c = field(mesh, seed);
        const k = where % c.length;
        c[k] = value;
        const heldNode = held && k < mesh.nx && mask.open[k] === 1;
        if (held) stepper.holdSurface(c, 1e20);
        const nu = meshNumber * finest(mesh) ** 2;
        if (variable) {
          const node = nodeNu(nu, c);
          const third = { rowsFrom: Math.floor(mesh.nz / 3), left: Math.floor(mesh.nx / 3), right: Math.floor(mesh.nx / 3) };
          stepper.stepVariable(c, node, scheme, held, 1e20, marked ? markUniformLines(node, mesh.nx, mesh.nz, nu, third) : null);
        } else {
          stepper.step(c, nu, scheme, held, 1e20);
        }
        const anywhere = c.some((v) => !Number.isFinite(v));
        if (!heldNode && !anywhere) throw new Error(`the ${value} at node ${k} vanished in one step`);
        if (anywhere === stepper.bottomRowFinite(c)) {
          throw new Error(`${value} at node ${k} (row ${Math.floor(k / mesh.nx)} of ${mesh.nz}): non-finite somewhere = ${anywhere}, bottom row finite = ${stepper.bottomRowFinite(c)}`);
        }
      }, 10_000);
  });
});
