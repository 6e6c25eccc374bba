import { describe, expect, it } from 'vitest';
import { FieldLines, searchBreakdown } from '../../packages/solver2d/src/breakdown.ts';
import { depletionDepthUm } from '../../packages/solver2d/src/depletion.ts';
import { PoissonSolver } from '../../packages/solver2d/src/electrostatics.ts';
import { FULOP, MASSEY, VAN_OVERSTRAETEN_DE_MAN, type IonisationModel } from '../../packages/solver2d/src/ionisation.ts';
import { areaCapacitanceFPerCm2, planeProblem } from '../../packages/solver2d/src/plane-junction.ts';

// Constants written out here, independently of the solver: q exact (SI 2019), ε0 CODATA 2018,
// εr(Si) = 11.7 (Baliga, Fundamentals of Power Semiconductor Devices; from memory), kT/q at
// 300 K from the exact Boltzmann constant, ni(300 K) = 9.65e9 cm^-3 (Altermatt et al., J. Appl.
// Phys. 93 (2003) 1598, as quoted in Sze & Ng (2007); from memory).
const Q = 1.602176634e-19;
const EPS = 11.7 * 8.8541878128e-14;
const VT = (1.380649e-23 * 300) / Q;
const NI = 9.65e9;

function uniformColumn(depthUm: number, nodes: number, net: (zUm: number) => number): { z: Float64Array; net: Float64Array } {
  const z = new Float64Array(nodes);
  const n = new Float64Array(nodes);
  for (let j = 0; j < nodes; j++) {
    z[j] = (depthUm * j) / (nodes - 1);
    n[j] = net(z[j]);
  }
  return { z, net: n };
}

function solverFor(column: { z: Float64Array; net: Float64Array }): PoissonSolver {
  const problem = planeProblem(column.z, column.net);
  if (problem === null) throw new Error('no junction');
  const solver = new PoissonSolver(problem);
  expect(solver.solve(0).converged).toBe(true);
  return solver;
}

describe('one-sided abrupt p+n junction (Sze & Ng, Physics of Semiconductor Devices (2007) ch. 2)', () => {
  const ND = 1e15;
  const NA = 1e19;
  const XJ = 0.5;
  const column = uniformColumn(20, 1001, (z) => (z < XJ ? -NA : ND));
  const vbi = VT * Math.log((NA * ND) / (NI * NI));
  // W = √(2ε(Vbi + VR − 2kT/q)/(qN)), C = ε/W (Sze & Ng eq. 2.13 and 2.19 with the majority-carrier correction).
  const width = (vr: number) => Math.sqrt((2 * EPS * (vbi + vr - 2 * VT)) / (Q * ND));

  it('built-in potential between the neutral sides is kT/q·ln(NA·ND/ni²) to 1e-5 V', () => {
    const solver = solverFor(column);
    const { z } = column;
    const pSide = z.findIndex((v) => v >= 0.25);
    const nSide = z.findIndex((v) => v >= 15);
    expect(Math.abs(solver.psi[nSide] - solver.psi[pSide] - vbi)).toBeLessThan(1e-5);
  });

  it('depletion width within 1.5 % and capacitance within 0.5 % at 10, 30 and 80 V', () => {
    const solver = solverFor(column);
    for (const vr of [10, 30, 80]) {
      expect(solver.continueTo(vr).converged).toBe(true);
      const w = width(vr);
      const depth = depletionDepthUm(solver, 0)! - XJ;
      const c = areaCapacitanceFPerCm2(solver);
      console.log(`abrupt ${vr} V: W ${depth.toFixed(4)} µm vs ${(w * 1e4).toFixed(4)}, C ${c.toExponential(4)} vs ${(EPS / w).toExponential(4)} F/cm²`);
      expect(Math.abs(depth / (w * 1e4) - 1)).toBeLessThan(0.015);
      expect(Math.abs(c / (EPS / w) - 1)).toBeLessThan(0.005);
    }
  });
});

describe('linearly graded junction (Sze & Ng (2007) ch. 2)', () => {
  // N = a·(z − z0), a = 1e20 cm^-4 (1e16 cm^-3 per µm). W = (12ε(Vg + VR)/(q·a))^(1/3), C = ε/W
  // with the gradient voltage Vg = (2/3)(kT/q)·ln(a²·ε·(kT/q)/(8q·ni³)) in place of Vbi (Sze &
  // Ng (2007) ch. 2; from memory, written here in its dimensionless form).
  const A = 1e20;
  const Z0 = 10;
  const column = uniformColumn(20, 1001, (z) => A * (z - Z0) * 1e-4);
  const vg = ((2 * VT) / 3) * Math.log((A * A * EPS * VT) / (8 * Q * NI ** 3));
  const width = (vr: number) => Math.cbrt((12 * EPS * (vg + vr)) / (Q * A));

  it('capacitance within 1 % and depletion edge within 3 % at 2, 10 and 30 V', () => {
    const solver = solverFor(column);
    for (const vr of [2, 10, 30]) {
      expect(solver.continueTo(vr).converged).toBe(true);
      const w = width(vr) * 1e4;
      const c = areaCapacitanceFPerCm2(solver);
      const edge = depletionDepthUm(solver, 0)! - Z0;
      console.log(`graded ${vr} V: W/2 ${edge.toFixed(4)} µm vs ${(w / 2).toFixed(4)}, C ${c.toExponential(4)} vs ${(EPS / (w * 1e-4)).toExponential(4)} F/cm²`);
      expect(Math.abs(c / (EPS / (w * 1e-4)) - 1)).toBeLessThan(0.01);
      expect(Math.abs(edge / (w / 2) - 1)).toBeLessThan(0.03);
    }
  });
});

describe('breakdown of a one-sided abrupt plane junction', () => {
  function breakdown(n: number, model: IonisationModel): number {
    // W at breakdown ≈ 2.67e10·N^(−7/8) cm (Baliga, from memory): the column holds 1.5 of it.
    const depth = 1 + 1.5 * 2.67e10 * n ** -0.875 * 1e4;
    const solver = solverFor(uniformColumn(depth, 1200, (z) => (z < 0.5 ? -1e20 : n)));
    const found = searchBreakdown(solver, new FieldLines(solver.problem.mesh), model, 5.34e13 * n ** -0.75);
    expect(found.breakdownV).not.toBeNull();
    return found.breakdownV!;
  }
  const dopings = [1e14, 1e15, 1e16];

  it('with Fulop\'s α = 1.8e-35·E^7 matches its closed form within 0.5 % at three N', () => {
    // ∫₀ᵂ α dx = 1 with E = Em(1 − x/W), Em = qNW/ε: α·Em^7·W/8 = 1, so Em = (8qN/(1.8e-35·ε))^(1/8)
    // and ε·Em²/(2qN) is the whole drop across the depletion region, Vbi + BV − 2kT/q (derived
    // here; the route of Baliga's power law; the 2kT/q of the majority-carrier tail as above).
    for (const n of dopings) {
      const em = ((8 * Q * n) / (1.8e-35 * EPS)) ** (1 / 8);
      const closed = (EPS * em * em) / (2 * Q * n);
      const vbi = VT * Math.log((1e20 * n) / (NI * NI));
      const bv = breakdown(n, FULOP);
      console.log(`Fulop N ${n.toExponential(0)}: BV + Vbi − 2kT/q ${(bv + vbi - 2 * VT).toFixed(2)} V vs closed form ${closed.toFixed(2)} V`);
      expect(Math.abs((bv + vbi - 2 * VT) / closed - 1)).toBeLessThan(0.005);
    }
  });

  it('with Van Overstraeten & De Man\'s coefficients lies off Baliga\'s 5.34e13·N^(−3/4) by less than the scatter between coefficient sets', () => {
    // Baliga, Fundamentals of Power Semiconductor Devices (from memory). The scatter is the
    // spread max/min − 1 of the three sets here (Van Overstraeten & De Man 1970, Massey et al.
    // 2006, Fulop 1967) at the same N.
    for (const n of dopings) {
      const values = [VAN_OVERSTRAETEN_DE_MAN, MASSEY, FULOP].map((m) => breakdown(n, m));
      const spread = Math.max(...values) / Math.min(...values) - 1;
      const baliga = 5.34e13 * n ** -0.75;
      console.log(`N ${n.toExponential(0)}: BV ${values.map((v) => v.toFixed(1)).join(' / ')} V, Baliga ${baliga.toFixed(1)} V, spread ${(100 * spread).toFixed(1)} %`);
      expect(Math.abs(values[0] / baliga - 1)).toBeLessThanOrEqual(spread);
    }
  });
});
