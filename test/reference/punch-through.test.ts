import { describe, expect, it } from 'vitest';
import { runRecipe } from '../../packages/solver2d/src/index.ts';
import { searchPunchThrough } from '../../packages/solver2d/src/punch-through.ts';
import { parseRecipe } from '../../packages/solver2d/src/recipe.ts';
import { searchStripe } from '../../packages/solver2d/src/stripe-search.ts';

// Constants written out here (see plane-junction.test.ts for their sources).
const Q = 1.602176634e-19;
const EPS = 11.7 * 8.8541878128e-14;
const VT = (1.380649e-23 * 300) / Q;
const NI = 9.65e9;

// Two 2 µm boron windows in lightly doped n-type silicon, a heavy predeposition (steep front
// against 1e15 cm^-3: its p side holds a small part of the depletion); coarse test mesh.
const N = 1e15;
const CS = 1e20;
const raw = {
  substrate: { dopant: 'P', concentrationCm3: N },
  crossSection: { widthUm: 16 },
  mask: { windows: [[4, 6], [10, 12]] },
  mesh: { refine: 0.5 },
  steps: [{ kind: 'predeposition', dopant: 'B', surfaceConcentrationCm3: CS, temperatureC: 1100, minutes: 30 }],
  electrical: { biasV: [0] },
};
const BIASES = [0, 2, 5];
const TOL = 0.005;

/** One-sided abrupt depletion width, µm: W = √(2ε(Vbi + V)/(qN)) (Sze & Ng (2007) ch. 2). */
function planarWidthUm(v: number, vbi: number): number {
  return Math.sqrt((2 * EPS * (vbi + v)) / (Q * N)) * 1e4;
}

/**
 * Outer radius of the depletion of a one-sided abrupt cylindrical junction of radius rj, µm: by
 * Gauss, E(r) = (qN/2ε)(rd² − r²)/r, and the drop Vbi + V = (qN/2ε)[rd²·ln(rd/rj) − (rd² − rj²)/2]
 * (derived here; the cylinder of Baliga & Ghandhi, Solid-State Electronics 19 (1976) 739),
 * solved for rd by bisection. A mask edge's junction with the surface as a mirror (no normal
 * field) is half such a cylinder, and with both regions at one bias the midline between them
 * is a mirror too, so each depletion edge moves as the cylinder's until they touch.
 */
function cylinderRadiusUm(v: number, vbi: number, rjUm: number): number {
  const k = (Q * N) / (2 * EPS);
  const rj = rjUm * 1e-4;
  let lo = rj;
  let hi = rj + 1;
  for (let it = 0; it < 200; it++) {
    const rd = 0.5 * (lo + hi);
    if (k * (rd * rd * Math.log(rd / rj) - (rd * rd - rj * rj) / 2) < vbi + v) lo = rd;
    else hi = rd;
  }
  return lo * 1e4;
}

describe('punch-through spacing of two boron regions in 1e15 cm^-3 n-type silicon', () => {
  const recipe = parseRecipe(raw);
  const found = BIASES.map((biasV) => searchPunchThrough(recipe, { biasV, toleranceUm: TOL }));

  it('is at least the metallurgical merge spacing at every bias, and grows with the bias', () => {
    // Common practice (no source): where the junctions merge the depletion regions have merged
    // too, so the depletion regions need at least the merge spacing, more under bias.
    const merge = searchStripe(recipe, { gapUm: 0, toleranceUm: TOL });
    console.log(`merge spacing ${merge.stripeUm.toFixed(4)} µm; punch-through at ${BIASES.join(', ')} V: ${found.map((f) => f.stripeUm.toFixed(4)).join(', ')} µm`);
    expect(found[0].stripeUm).toBeGreaterThanOrEqual(merge.stripeUm);
    for (let b = 1; b < BIASES.length; b++) expect(found[b].stripeUm).toBeGreaterThan(found[b - 1].stripeUm);
    for (const f of found) {
      expect(f.bracketUm[1] - f.bracketUm[0]).toBeLessThanOrEqual(TOL);
      expect(f.solves.some((s) => !s.meets)).toBe(true);
    }
  });

  it('grows by twice the growth of the depletion width: within 8 % of the cylindrical junction with rj from the report, below the planar 2·ΔW', () => {
    // Both depletion regions spread into the substrate, so the stripe grows by 2·ΔW. The plane
    // formula (Sze & Ng ch. 2) overstates ΔW at a curved edge, where the charge spreads over a
    // growing radius; the cylinder takes rj from the report's edge radius.
    const one = runRecipe({ ...raw, mask: { windows: [[4, 6]] }, electrical: undefined }).report.windows[0];
    const rj = one.curvatureRadiusLeftUm!;
    // Built-in potential kT/q·ln(NA·ND/ni²) with the surface value as the heavy side (Sze & Ng ch. 2).
    const vbi = VT * Math.log((CS * N) / (NI * NI));
    for (let b = 1; b < BIASES.length; b++) {
      const [v0, v1] = [BIASES[b - 1], BIASES[b]];
      const growth = found[b].stripeUm - found[b - 1].stripeUm;
      const planar = 2 * (planarWidthUm(v1, vbi) - planarWidthUm(v0, vbi));
      const cylinder = 2 * (cylinderRadiusUm(v1, vbi, rj) - cylinderRadiusUm(v0, vbi, rj));
      console.log(`${v0} → ${v1} V: stripe grows ${growth.toFixed(3)} µm; 2·ΔW planar ${planar.toFixed(3)} µm (ratio ${(growth / planar).toFixed(3)}), cylinder of rj ${rj} µm ${cylinder.toFixed(3)} µm (ratio ${(growth / cylinder).toFixed(3)})`);
      expect(Math.abs(growth / cylinder - 1)).toBeLessThan(0.08);
      expect(growth).toBeLessThan(planar);
      expect(growth).toBeGreaterThan(0.7 * planar);
    }
  });
});
