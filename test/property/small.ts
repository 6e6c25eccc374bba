import { analyze, parseRecipe, planRecipe, REPORT_SCHEMA_ID, simulate, type Analysis, type Plan } from '../../packages/solver2d/src/index.ts';
import type { Simulation } from '../../packages/solver2d/src/simulate.ts';
import { UM_TO_CM } from '../../packages/solver2d/src/units.ts';
import { count, numbersIn, worst } from './support.ts';

export const NO_LIMITS = { maxMeshPoints: Infinity, maxPointSteps: Infinity };
import type { Json, Recipe } from './generators.ts';

/**
 * The same recipe on a small mesh, for properties that solve it: about 24 columns and 15 rows
 * of the depth the default plan chose, and steps growing by 1.5 (unless the recipe sets its
 * own). A solve then takes a millisecond or two. Nothing here is about accuracy: the
 * properties are ones every mesh must keep.
 */
export function onSmallMesh(recipe: Recipe): Recipe {
  // Sizing only: the default mesh is counted, never allocated, so no limit applies to it here.
  const plan = planRecipe(parseRecipe(recipe), NO_LIMITS);
  const depthUm = Number(plan.mesh.depthUm.toPrecision(4));
  const widthUm = (recipe.crossSection as Recipe).widthUm as number;
  return {
    ...recipe,
    crossSection: { widthUm, depthUm },
    mesh: { surfaceSpacingUm: depthUm / 14, edgeSpacingUm: widthUm / 24, maxSpacingUm: Math.max(depthUm / 7, widthUm / 12) },
    numerics: { stepGrowth: 1.5, ...((recipe.numerics as Record<string, Json> | undefined) ?? {}) },
  };
}

/**
 * The largest concentration a species' sources put into the silicon, cm^-3: the held surface
 * value, a film's dose in the surface cell, an implant's peak Q/(√(2π)·ΔRp) (closed forms of
 * each source as simulate.ts places it).
 */
export function sourcePeak(plan: Plan, name: string): number {
  let peak = 0;
  for (const st of plan.steps) {
    if (st.dopant !== name) continue;
    if (st.kind === 'predeposition') {
      const sp = plan.species.find((s) => s.name === name)!;
      peak = Math.max(peak, st.surfaceConcentrationCm3 ?? Math.max(Number(sp.solubility(st.startC!)), Number(sp.solubility(st.endC!))));
    }
    if (st.kind === 'film' && st.doseCm2 !== null) peak = Math.max(peak, st.doseCm2 / (plan.mesh.dzVolume[0] * UM_TO_CM));
    if (st.implant) peak = Math.max(peak, st.implant.doseCm2 / (Math.sqrt(2 * Math.PI) * st.implant.straggleUm * UM_TO_CM));
  }
  return peak;
}

/**
 * No negative concentration, to rounding: a node that is zero in exact arithmetic comes out
 * of the line solves as a difference of values up to the source's peak, so it can land
 * below zero by rounding, by more where the steps are stiff: their condition number,
 * 1 + 4·ν/h², multiplies it, and long steps on fine cells reach 1e3 to 1e5 (up to 8e-13 of the
 * peak has been seen). A scheme that rang would leave lobes of 1e-3 of the peak or more; the
 * floor, −1e-10 of the peak, sits between the two.
 */
export function checkNonNegative(sim: Simulation): void {
  for (const [name, c] of Object.entries(sim.concentration)) {
    let lowest = Infinity;
    let at = -1;
    for (let k = 0; k < c.length; k++) if (c[k] < lowest) { lowest = c[k]; at = k; }
    const peak = sourcePeak(sim.plan, name);
    worst('most negative concentration / source peak', -lowest / peak);
    if (!(lowest >= -1e-10 * peak)) {
      throw new Error(`${name} is ${lowest} at node ${at} (row ${Math.floor(at / sim.plan.mesh.nx)}, column ${at % sim.plan.mesh.nx}), below −1e-10 of the peak ${peak.toExponential(2)}`);
    }
  }
  count('no negative concentration (every solve in this file)');
}

/**
 * A valid recipe's solve gives a whole report: its schema, one entry per window, every
 * number finite (NaN or Inf would be written as null by JSON.stringify), and a dose ledger
 * that balances over the whole recipe (what entered through a held surface, a film or an
 * implant is in the silicon: the scheme is conservative to rounding, stepper.test.ts; 1e-9
 * is the issue's bound).
 */
export function checkReport(sim: Simulation, analysis: Analysis): void {
  const { report } = analysis;
  if (report.schema !== REPORT_SCHEMA_ID) throw new Error(`schema ${report.schema}`);
  const windows = sim.plan.mask.windows.length;
  if (report.windows.length !== windows) throw new Error(`${report.windows.length} window reports for ${windows} windows`);
  const bad = numbersIn(report).filter(([, v]) => !Number.isFinite(v));
  if (bad.length > 0) throw new Error(`non-finite numbers in the report: ${bad.slice(0, 5).map(([p, v]) => `${p} = ${v}`).join(', ')}`);
  for (const [name, entry] of Object.entries(sim.ledger)) {
    if (!(entry.relativeImbalance <= 1e-9)) throw new Error(`${name}: dose ledger off by ${entry.relativeImbalance}`);
  }
  count('a valid recipe gives a whole, finite report (every solve in this file)');
}

/** parse → plan → simulate → analyze, with the non-negativity and report checks on the way. */
export function solve(recipe: unknown): { plan: Plan; sim: Simulation } & Analysis {
  const plan = planRecipe(parseRecipe(recipe));
  const sim = simulate(plan);
  checkNonNegative(sim);
  const analysis = analyze(sim);
  checkReport(sim, analysis);
  return { plan, sim, ...analysis };
}
