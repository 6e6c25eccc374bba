import erf from '@stdlib/math-base-special-erf';
import erfcinv from '@stdlib/math-base-special-erfcinv';
import fc from 'fast-check';
import { describe, it } from 'vitest';
import { parseRecipe, planRecipe } from '../../packages/solver2d/src/index.ts';
import { zeroContours, type NodeGrid } from '../../packages/solver2d/src/junction.ts';
import { BOLTZMANN_EV_PER_K, CM2_PER_S_TO_UM2_PER_S, UM_TO_CM } from '../../packages/solver2d/src/units.ts';
import { wellFormed, type Json, type Recipe } from './generators.ts';
import { NO_LIMITS, onSmallMesh, solve } from './small.ts';
import { check, count, logUniform, printCountsAfterAll, round3, uniform } from './support.ts';

/**
 * Invariants of whole solves on generated cases (small meshes, so each solve is a few
 * milliseconds): dose conserved in a drive-in, no negative concentration (after every solve
 * here, see small.ts), mirror symmetry, deeper with more time or heat, and translation.
 */
printCountsAfterAll('invariants.test.ts');

const heatStep = fc.record({ kind: fc.constantFrom('drive-in', 'anneal'), temperatureC: fc.oneof(uniform(900, 1200).map(round3), fc.tuple(uniform(900, 1200), uniform(900, 1200)).map(([a, b]) => [round3(a), round3(b)])), minutes: logUniform(5, 240) });

/** Sum of C·Δx·ΔV over the mesh, cm^-3·µm², from the plan's own mesh (not the stepper's). */
function content(mesh: { nx: number; nz: number; dx: Float64Array; dzVolume: Float64Array }, c: Float64Array): number {
  let total = 0;
  for (let j = 0; j < mesh.nz; j++) for (let i = 0; i < mesh.nx; i++) total += c[j * mesh.nx + i] * mesh.dx[i] * mesh.dzVolume[j];
  return total;
}

/** A well-formed recipe whose sources are films and implants only (no held surface), then heats. */
const finiteSources = wellFormed({ noMesh: true }).chain((g) => fc.tuple(fc.constant(g), fc.array(heatStep, { minLength: 0, maxLength: 2 })).map(([{ recipe, introduced }, extra]) => {
  const steps = (recipe.steps as Recipe[]).map((s) => (s.kind === 'predeposition'
    ? { kind: 'film', dopant: s.dopant, doseCm2: Math.min(1e16, (s.surfaceConcentrationCm3 === 'solubility' ? 1e20 : s.surfaceConcentrationCm3 as number) * 1e-5) }
    : s));
  return { recipe: { ...recipe, steps: [...steps, ...extra] as Json[] }, introduced };
}));

describe('solver invariants on generated cases', () => {
  it('dose is conserved through drive-ins: what the films placed is what the silicon holds (1e-9 relative)', () => {
    // Zero-flux walls and a sealed surface: the finite-volume scheme conserves content to
    // rounding (about N·ε a step, N ≤ 2000 cells, 100 steps: 2e-11; stepper.test.ts). 1e-9 is
    // the bound. The expected dose is the closed form Q·W (films are placed in whole
    // open cells, which the windows' faces bound exactly), not the solver's ledger.
    check('dose conserved in drive-in', finiteSources, ({ recipe }) => {
      const small = onSmallMesh(recipe);
      const { plan, sim } = solve(small);
      const openUm = plan.mask.windows.reduce((w, [x0, x1]) => w + (x1 - x0), 0);
      const placed: Record<string, number> = {};
      let implanted = false;
      for (const s of small.steps as Recipe[]) {
        if (s.kind === 'film') placed[s.dopant as string] = (placed[s.dopant as string] ?? 0) + (s.doseCm2 as number);
        if (s.kind === 'implant') implanted = true;
      }
      for (const [name, entry] of Object.entries(sim.ledger)) {
        if (!(entry.relativeImbalance <= 1e-9)) throw new Error(`${name}: ledger imbalance ${entry.relativeImbalance}`);
        // An implant's Gaussian is cut at the surface and the bottom, so only film-only species have a closed form.
        const implantedHere = implanted && (small.steps as Recipe[]).some((s) => s.kind === 'implant' && s.dopant === name);
        if (implantedHere) continue;
        const expected = (placed[name] / UM_TO_CM) * openUm;
        const held = content(plan.mesh, sim.concentration[name]);
        if (!(Math.abs(held - expected) <= 1e-9 * expected)) throw new Error(`${name}: holds ${held}, placed ${expected} (${(Math.abs(held - expected) / expected).toExponential(2)} relative)`);
      }
    }, 400);
  });

  it('a window placed symmetrically gives a field symmetric to 1e-12 of its largest value', () => {
    // The plan's mesh is graded from the mask edges, which mirror each other: its faces mirror
    // to rounding. Each line solve is backward stable; with these steps (mesh numbers up to a
    // few, growth 1.5) the two halves agree to about 1e-14 (stepper.test.ts): 1e-12 has margin.
    const symmetric = fc.tuple(wellFormed({ noMesh: true }), fc.boolean(), uniform(0.1, 0.45), uniform(0.05, 0.3)).map(([g, pair, a, b]) => {
      const widthUm = (g.recipe.crossSection as Recipe).widthUm as number;
      const windows = pair
        ? [[round3(a * widthUm * 0.5), round3((a + b) * widthUm * 0.5)]].flatMap(([x0, x1]) => [[x0, x1], [widthUm - x1, widthUm - x0]])
        : [[round3(a * widthUm), widthUm - round3(a * widthUm)]];
      return { ...g.recipe, mask: { windows } } as Recipe;
    });
    check('mirror symmetry of the field', symmetric, (recipe) => {
      const { plan, sim } = solve(onSmallMesh(recipe));
      const { nx, nz } = plan.mesh;
      for (const [name, c] of Object.entries(sim.concentration)) {
        let top = 0;
        let worst = 0;
        for (let j = 0; j < nz; j++) {
          for (let i = 0; i < nx; i++) {
            top = Math.max(top, Math.abs(c[j * nx + i]));
            worst = Math.max(worst, Math.abs(c[j * nx + i] - c[j * nx + nx - 1 - i]));
          }
        }
        if (!(worst <= 1e-12 * top)) throw new Error(`${name}: asymmetry ${(worst / top).toExponential(2)} of the largest value (${nx} × ${nz})`);
      }
    }, 400);
  });

  it('more time or a higher temperature never gives a shallower junction', () => {
    // Two cases where the closed form says the junction only deepens with ∫D dt:
    //  - a constant source: xj = 2√(Dt)·erfc⁻¹(NB/Cs), and the whole region above NB grows
    //    (C rises with time everywhere for a source held from zero initial data);
    //  - a film in a window of half-width a, then a drive-in: at the centre
    //    C = Q/√(πDt)·exp(−z²/4Dt)·erf(a/2√(Dt)), so d(xj²)/d√(Dt) > 0 while the centre's
    //    surface value stays above e·NB (erf(u)'s log-derivative times u is at most 1);
    //    cases keep it above 20·NB after the longer drive-in.
    // Both solves share one uniform mesh and step ratio (1.1); ∫D dt grows by at least 5 %,
    // so xj by at least 2.4 %, while the two solves' errors differ by far less (each is under
    // 1 % at ratio 1.2, plan.ts). So xj and both lateral reaches must not shrink at all.
    const pairs = fc.record({
      film: fc.boolean(),
      d0: logUniform(0.1, 10), ea: uniform(3.2, 3.8),
      background: logUniform(1e14, 1e17), cs: logUniform(1e18, 1e21), dose: logUniform(1e13, 1e16),
      t1: uniform(950, 1150), m1: logUniform(5, 120),
      dT: fc.oneof(fc.constant(0), uniform(1, 40)), k: uniform(1, 3),
      halfWindowFactor: uniform(1, 4),
    }).filter((p) => diffusivity(p.d0, p.ea, p.t1 + p.dT) * p.m1 * p.k >= 1.05 * diffusivity(p.d0, p.ea, p.t1) * p.m1);
    let kept = 0;
    check('deeper with more time or heat', pairs, (p) => {
      const beta = (t: number, m: number) => diffusivity(p.d0, p.ea, t) * m * 60 * CM2_PER_S_TO_UM2_PER_S;
      const b1 = beta(p.t1, p.m1);
      const b2 = beta(p.t1 + p.dT, p.m1 * p.k);
      // 1D junction depths, closed forms (sizing the shared mesh only): erfc for the constant source, the Gaussian for the film.
      const reach = (b: number) => 2 * Math.sqrt(b) * (p.film ? Math.sqrt(Math.log(Math.max(2, p.dose / UM_TO_CM / (p.background * Math.sqrt(Math.PI * b))))) : erfcinv(p.background / p.cs));
      const halfWindow = p.halfWindowFactor * reach(b1);
      if (p.film) {
        // The centre's surface value after the longer drive-in, closed form (cm^-3).
        const surface = (p.dose / UM_TO_CM) / Math.sqrt(Math.PI * b2) * erf(halfWindow / (2 * Math.sqrt(b2)));
        if (surface < 20 * p.background) return;
      }
      kept++;
      count('deeper with more time or heat, pairs solved');
      const h = 2 ** Math.round(Math.log2(reach(b1) / 8));
      const margin = Math.ceil((2 * reach(b2)) / h) * h;
      const w = Math.max(2, Math.round((2 * halfWindow) / h)) * h;
      const mesh = { surfaceSpacingUm: h, edgeSpacingUm: h, maxSpacingUm: h };
      const make = (t: number, m: number): Recipe => ({
        title: 'monotonicity (invented)',
        substrate: { dopant: 'P', concentrationCm3: p.background },
        crossSection: { widthUm: 2 * margin + w, depthUm: Math.ceil((2 * reach(b2)) / h) * h },
        mask: { windows: [[margin, margin + w]] },
        dopants: { Q: { type: 'acceptor', D0Cm2PerS: p.d0, EaEv: p.ea } },
        mesh, numerics: { stepGrowth: 1.1 },
        steps: p.film
          ? [{ kind: 'film', dopant: 'Q', doseCm2: p.dose }, { kind: 'drive-in', temperatureC: t, minutes: m }]
          : [{ kind: 'predeposition', dopant: 'Q', surfaceConcentrationCm3: p.cs, temperatureC: t, minutes: m }],
      });
      const a = solve(make(p.t1, p.m1));
      const b = solve(make(p.t1 + p.dT, p.m1 * p.k));
      if (a.plan.mesh.nx !== b.plan.mesh.nx || a.plan.mesh.nz !== b.plan.mesh.nz) throw new Error('test set-up: the two meshes differ');
      const [wa] = a.report.windows;
      const [wb] = b.report.windows;
      // Lateral reach too for the constant source (the comparison principle covers the whole region).
      for (const key of p.film ? ['junctionDepthUm'] as const : ['junctionDepthUm', 'lateralLeftUm', 'lateralRightUm'] as const) {
        const before = wa[key];
        const after = wb[key];
        if (before === null || after === null) throw new Error(`test set-up: no junction (${key}: ${before} → ${after})`);
        if (!(after >= before)) throw new Error(`${key} ${before} µm → ${after} µm with ∫D dt ×${(b2 / b1).toFixed(3)} (${p.film ? 'film' : 'constant source'})`);
      }
    }, 300);
    if (kept < 200) throw new Error(`only ${kept} of 300 pairs had a film far enough above the background: the generator needs adjusting`);
  });

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
    const shifted = fc.tuple(wellFormed({ noMesh: true }), fc.integer({ min: 1, max: 12 })).map(([g, m]) => ({ g, m }));
    check('translation moves the field and the contour', shifted, ({ g, m }) => {
      // Sized from the recipe with its depth left to the plan: the profile's reach and ∫D dt.
      const free = { ...g.recipe, crossSection: { widthUm: (g.recipe.crossSection as Recipe).widthUm } };
      const sizing = planRecipe(parseRecipe(free), NO_LIMITS);
      const spread = Math.max(sizing.reachUm, Math.sqrt(Math.max(...Object.values(sizing.thermalBudgetUm2))));
      const h = 2 ** Math.round(Math.log2(spread / 8));
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
    }, 150);
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

/** D = D0·exp(−Ea/kT), cm²/s: the Arrhenius law a species of the recipe's own follows (README). */
function diffusivity(d0: number, ea: number, temperatureC: number): number {
  return d0 * Math.exp(-ea / (BOLTZMANN_EV_PER_K * (temperatureC + 273.15)));
}
