import { describe, expect, it } from 'vitest';
import { arrheniusUm2PerS, bisect, filmField, type FilmCase } from '../support/closed-forms.ts';
import { filmRecipe, TEST_DOPANT } from '../support/recipes.ts';
import { solve } from '../support/solve.ts';

const T = 1050;
const MINUTES = 60;
const DOSE = 1e15;
const NB = 1e16;
const WIDTH = 40;
const dt = arrheniusUm2PerS(TEST_DOPANT.D0Cm2PerS, TEST_DOPANT.EaEv, T) * MINUTES * 60;

/** Distance from a point to the exact junction, to first order: |ln(C/NB)| / |∇ ln C|. */
function distanceToExactJunction(c: FilmCase, x: number, z: number): number {
  const h = 1e-5;
  const ln = (px: number, pz: number) => Math.log(filmField(c, px, Math.max(0, pz)));
  const gx = (ln(x + h, z) - ln(x - h, z)) / (2 * h);
  const gz = z > h ? (ln(x, z + h) - ln(x, z - h)) / (2 * h) : (ln(x, z + h) - ln(x, z)) / h;
  return Math.abs(ln(x, z) - Math.log(NB)) / Math.hypot(gx, gz);
}

function check(x0: number, x1: number) {
  const run = solve(filmRecipe({ widthUm: WIDTH, windows: [[x0, x1]], dose: DOSE, background: NB, temperatureC: T, minutes: MINUTES }));
  const exact: FilmCase = { q: DOSE, dt, x0, x1, width: WIDTH, depth: run.plan.mesh.depthUm };
  const centre = 0.5 * (x0 + x1);
  const xj = bisect((z) => filmField(exact, centre, z) - NB, 0, run.plan.mesh.depthUm);
  const edge = bisect((x) => filmField(exact, x, 0) - NB, 0, x0);
  let worst = 0;
  for (const junction of run.report.junctions) {
    for (const [x, z] of junction.polylinesUm[0]) worst = Math.max(worst, distanceToExactJunction(exact, x, z));
  }
  return { run, xj, lateral: x0 - edge, worst };
}

// Closed form: fixed dose in a window, sealed surface, separable 2D solution (REFERENCES.md),
// with mirror images for the zero-flux walls.
describe('film source in a window, then drive-in, against the exact 2D solution', () => {
  const wide = check(10, 30);
  // 0.2 µm is narrower than 2√(Dt) ≈ 0.26 µm: the narrow-window regime.
  const narrow = check(19.9, 20.1);

  for (const [name, c] of [['wide (20 µm)', wide], ['narrow (0.2 µm)', narrow]] as const) {
    it(`${name}: junction depth at the centre within 0.5 % of the exact xj`, () => {
      expect(Math.abs(c.run.report.windows[0].junctionDepthUm! / c.xj - 1)).toBeLessThan(0.005);
    });
    it(`${name}: lateral encroachment within 0.5 % of the exact xj`, () => {
      expect(Math.abs(c.run.report.windows[0].lateralLeftUm! - c.lateral) / c.xj).toBeLessThan(0.005);
      expect(Math.abs(c.run.report.windows[0].lateralRightUm! - c.lateral) / c.xj).toBeLessThan(0.005);
    });
    it(`${name}: every junction contour vertex within 0.5 % of xj of the exact contour`, () => {
      console.log(`film ${name}: worst contour distance ${(c.worst / c.xj * 100).toFixed(3)} % of xj`);
      expect(c.run.report.junctions.length).toBeGreaterThan(0);
      expect(c.worst / c.xj).toBeLessThan(0.005);
    });
  }

  it('the narrow window gives a shallower junction than the wide one, as the exact solution does', () => {
    // Narrow-window effect (REFERENCES.md, Kennedy & O'Brien's group, 1966).
    expect(narrow.xj).toBeLessThan(0.97 * wide.xj);
    const ratio = narrow.run.report.windows[0].junctionDepthUm! / wide.run.report.windows[0].junctionDepthUm!;
    expect(Math.abs(ratio - narrow.xj / wide.xj)).toBeLessThan(0.005);
  });
});
