import fc from 'fast-check';
import { describe, it } from 'vitest';
import { parseRecipe, planRecipe } from '../../packages/solver2d/src/index.ts';
import { zeroContours, type NodeGrid } from '../../packages/solver2d/src/junction.ts';
import { wellFormed, type Recipe } from './generators.ts';
import { NO_LIMITS, solve } from './small.ts';
import { check, count, printCountsAfterAll } from './support.ts';

/**
 * Translation invariance of whole solves on generated recipes (every source, model and
 * step kind the generator makes), and no negative concentration after each solve (small.ts).
 */
printCountsAfterAll('translation.test.ts');

describe('translation on generated cases', () => {
  it('moving the windows and the cross-section by the same offset moves the field, and with it the contour, by that offset', () => {
    // Exact up to rounding on a uniform mesh whose spacing h is a power of two µm, with every
    // window edge, the width and the offset whole multiples of h: the shifted mesh is the same
    // cells with m more on the left (positions exact in binary), the time steps are the same
    // (they depend on the finest cell and ∫D dt only), and the one physical difference, the
    // farther left wall, where each species must be below 1e-13 of its largest value (the
    // margin is widened until it is, or the case is skipped): what the wall reflects is no
    // more than what reaches it. So:
    //  - field: each species agrees cell for cell to 1e-12 of its largest value (the line
    //    solves are longer by m cells, which changes only their rounding: 4e-14 measured);
    //  - contour: a vertex is the zero of the linear interpolant on a grid edge of length L
    //    between values a and b of opposite sign, x = p + L·a/(a − b); values off by at most
    //    Δ (the field difference, summed over species) move it by at most 2·L·Δ/|a − b|,
    //    plus 1e-9 µm for rounding of the positions. Δ is measured, not assumed.
    // Nothing here needs the field to be accurate, only the same: the mesh is coarse (about
    // two cells a diffusion length), so that a solve takes a millisecond or two. Cases whose
    // dopant reaches the wall are drawn but not checked: 10,400 draws give the 10,000
    // checked cases the suite asks for (checked below).
    const shifted = fc.tuple(wellFormed({ noMesh: true }), fc.integer({ min: 1, max: 12 })).map(([g, m]) => ({ g, m }));
    let checked = 0;
    const runs = 10_400;
    check('translation, cases drawn', shifted, ({ g, m }) => {
      // Sized from the recipe with its depth left to the plan: the profile's reach, ∫D dt and
      // the depth it needs, none of which depends on the mesh (so the sizing mesh is the
      // coarsest the plan allows, about 8 × 8).
      const free = { ...g.recipe, crossSection: { widthUm: (g.recipe.crossSection as Recipe).widthUm }, physics: { ted: false } };
      const sizing = planRecipe(parseRecipe({ ...free, mesh: { surfaceSpacingUm: 100, edgeSpacingUm: 100, maxSpacingUm: 100 } }), NO_LIMITS);
      const spread = Math.max(sizing.reachUm, Math.sqrt(Math.max(...Object.values(sizing.thermalBudgetUm2))));
      const h = Math.min(64, 2 ** Math.round(Math.log2(spread / 2)));
      const grid = (x: number) => Math.max(1, Math.round(x / h)) * h;
      const windows = ((g.recipe.mask as Recipe).windows as number[][]).map(([x0, x1]) => [x0, x1]);
      const layout = (margin: number) => {
        // The same windows snapped to the grid, a reach apart, `margin` from the walls.
        let x = margin;
        const placed: number[][] = [];
        for (const [x0, x1] of windows) {
          const width = grid(x1 - x0);
          placed.push([x, x + width]);
          x += width + grid(Math.max(h, sizing.reachUm));
        }
        return { placed, widthUm: x + margin };
      };
      const depthUm = grid(Math.max(1.5 * sizing.reachUm, sizing.mesh.depthUm));
      // Long implicit steps spread a tail about √(ν)/h cells a decade: 6 spreads clear the wall
      // in most cases; twice that for the rest (concentration-dependent diffusion runs ahead of ∫D dt).
      let margin = grid(6 * spread);
      const base = (offset: number): Recipe => {
        const { placed, widthUm } = layout(margin);
        return {
          ...g.recipe,
          crossSection: { widthUm: widthUm + offset, depthUm },
          mask: { windows: placed.map(([x0, x1]) => [x0 + offset, x1 + offset]) },
          mesh: { surfaceSpacingUm: h, edgeSpacingUm: h, maxSpacingUm: h },
          numerics: { stepGrowth: 1.5 },
          // Transient enhanced diffusion moves nothing this check is about (it is uniform over the
          // section) and multiplies the budget of low-temperature implant anneals, and with it the
          // margins and solves: off here, tested in transient-enhanced-diffusion.test.ts.
          physics: { ted: false },
        };
      };
      let a = solve(base(0));
      if (!wallClear(a.sim.concentration, a.plan.mesh.nx, a.plan.mesh.nz)) {
        margin *= 2;
        a = solve(base(0));
        if (!wallClear(a.sim.concentration, a.plan.mesh.nx, a.plan.mesh.nz)) {
          count('translation, cases skipped: dopant at the wall after two margins');
          return;
        }
      }
      const { nx, nz } = a.plan.mesh;
      const d = m * h;
      const b = solve(base(d));
      if (b.plan.mesh.nx !== nx + m || b.plan.mesh.nz !== nz) throw new Error(`test set-up: ${nx} and ${b.plan.mesh.nx} columns for an offset of ${m} cells`);
      let delta = 0;
      for (const [name, ca] of Object.entries(a.sim.concentration)) {
        const cb = b.sim.concentration[name];
        let top = 0;
        let worst = 0;
        for (let j = 0; j < nz; j++) {
          for (let i = 0; i < nx; i++) {
            top = Math.max(top, Math.abs(ca[j * nx + i]));
            worst = Math.max(worst, Math.abs(cb[j * (nx + m) + i + m] - ca[j * nx + i]));
          }
        }
        if (!(worst <= 1e-12 * top)) throw new Error(`${name}: the shifted field differs by ${(worst / top).toExponential(2)} of its largest value`);
        delta += worst;
      }
      // The contours, unrounded, from the junction grids analyze.ts built (the report rounds to 6 digits).
      const la = zeroContours(a.grid);
      const lb = zeroContours(b.grid);
      if (la.length !== lb.length) throw new Error(`${la.length} junction polylines, shifted ${lb.length}`);
      la.forEach((line, n) => {
        if (line.length !== lb[n].length) throw new Error(`polyline ${n}: ${line.length} vertices, shifted ${lb[n].length}`);
        line.forEach(([xa, za], v) => {
          const [xb, zb] = lb[n][v];
          const tol = 1e-9 + vertexSensitivity(a.grid, xa, za) * delta;
          if (!(Math.abs(xb - d - xa) <= tol && Math.abs(zb - za) <= tol)) {
            throw new Error(`polyline ${n} vertex ${v}: (${xa}, ${za}) µm, shifted by ${d}: (${xb}, ${zb}) µm, beyond ${tol.toExponential(2)} µm`);
          }
        });
      });
      checked++;
      count('translation moves the field and the contour');
    }, runs);
    if (checked < 10_000) throw new Error(`only ${checked} of ${runs} cases kept the dopant off the wall: the margins need widening`);
  });
});

/** True when every species in the first column is below 1e-13 of its largest value. */
function wallClear(concentration: Record<string, Float64Array>, nx: number, nz: number): boolean {
  for (const c of Object.values(concentration)) {
    let top = 0;
    let wall = 0;
    for (let j = 0; j < nz; j++) {
      wall = Math.max(wall, Math.abs(c[j * nx]));
      for (let i = 0; i < nx; i++) top = Math.max(top, Math.abs(c[j * nx + i]));
    }
    if (wall > 1e-13 * top) return false;
  }
  return true;
}

/**
 * How far a contour vertex at (x, z) can move per unit change of the grid values: 2·L/|a − b|
 * for the grid edge it lies on (length L, end values a and b; see zeroContours in junction.ts).
 */
function vertexSensitivity(grid: NodeGrid, x: number, z: number): number {
  const { xs, zs, values, nx } = grid;
  const j = zs.indexOf(z);
  if (j >= 0) {
    let i = 0;
    while (i + 2 < nx && xs[i + 1] < x) i++;
    return (2 * (xs[i + 1] - xs[i])) / Math.abs(values[j * nx + i] - values[j * nx + i + 1]);
  }
  const i = xs.indexOf(x);
  let k = 0;
  while (k + 2 < zs.length && zs[k + 1] < z) k++;
  return (2 * (zs[k + 1] - zs[k])) / Math.abs(values[k * nx + i] - values[(k + 1) * nx + i]);
}
