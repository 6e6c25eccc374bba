import { analyze3d } from './analyze3d.ts';
import { electricalReport } from './electrical.ts';
import { engineeringResults } from './engineering.ts';
import { buildField, type Field } from './field.ts';
import type { Analysis, Report, WindowReport } from './report.ts';
import {
  columnAt, crossings, junctionIndicator, lateralReach, surfaceCrossings, wallPaddedGrid, zeroContours,
  type LateralReach,
} from './junction.ts';
import { finestX, finestZ } from './mesh.ts';
import { oxideAt } from './point-defect-enhancement.ts';
import { openWidth, type Simulation } from './simulate.ts';
import { doseFromConcentrationUm } from './units.ts';

import { REPORT_SCHEMA_ID } from './schema-ids.ts';

export { REPORT_SCHEMA_ID };
export type { Analysis, Report, WindowReport } from './report.ts';


/** Signed so that the region of the type opposite to the substrate is positive. */
function invertedIndicator(field: Field, substrateType: string): Float64Array {
  const f = junctionIndicator(field.donors, field.acceptors, new Float64Array(field.donors.length));
  if (substrateType === 'donor') for (let k = 0; k < f.length; k++) f[k] = -f[k];
  return f;
}

function rounded(v: number, digits = 6): number {
  return Number(v.toPrecision(digits));
}

/**
 * Σ a[j]·b[j]. A function of its own, as are the mesh's finestX and finestZ: a loop inside
 * analyze that ran hot had the whole of analyze compiled mid-call, with all it calls, once
 * in every worker thread of a sweep.
 */
function weightedSum(a: Float64Array, b: Float64Array): number {
  let sum = 0;
  for (let j = 0; j < a.length; j++) sum += a[j] * b[j];
  return sum;
}

/** ∫∫C dx dz over the cross-section, cm^-3·µm² (rows of nx cells, dx each, dzVolume[j] deep). */
function content(c: Float64Array, dx: Float64Array, dz: Float64Array): number {
  const nx = dx.length;
  let sum = 0;
  for (let j = 0, k = 0; j < dz.length; j++) {
    let row = 0;
    for (let i = 0; i < nx; i++, k++) row += c[k] * dx[i];
    sum += row * dz[j];
  }
  return sum;
}

/** The largest value of an array. */
function largest(v: Float64Array): number {
  let top = 0;
  for (let k = 0; k < v.length; k++) top = v[k] > top ? v[k] : top;
  return top;
}

export function analyze(sim: Simulation): Analysis {
  const { plan } = sim;
  if (plan.space) return analyze3d(sim, plan.space);
  const { mesh, recipe } = plan;
  const field = buildField(sim);
  const indicator = invertedIndicator(field, plan.substrate.type);
  const grid = wallPaddedGrid(mesh, indicator);
  const column = new Float64Array(mesh.nz);
  const netGrid = wallPaddedGrid(mesh, field.layers.net.data);
  const speciesGrids = Object.fromEntries(plan.species.map((s) => [s.name, wallPaddedGrid(mesh, sim.concentration[s.name])]));

  const warnings = [...plan.warnings];
  // The near edges of each window's neighbours (walls where there is none).
  const { windows: given, order } = plan.mask;
  const leftLimit = (k: number) => (order.indexOf(k) > 0 ? given[order[order.indexOf(k) - 1]][1] : -Infinity);
  const rightLimit = (k: number) => (order.indexOf(k) < order.length - 1 ? given[order[order.indexOf(k) + 1]][0] : Infinity);
  const reaches: [LateralReach | null, LateralReach | null][] = [];
  const windows: WindowReport[] = plan.mask.windows.map(([x0, x1], k) => {
    const centre = 0.5 * (x0 + x1);
    const centreColumn = columnAt(grid, centre, column);
    const depths = crossings(centreColumn, mesh.z);
    if (centreColumn[mesh.nz - 1] > 0) {
      warnings.push(`below the window [${x0}, ${x1}] µm the diffused region reaches the bottom of the cross-section (${rounded(mesh.depthUm, 4)} µm): the deepest junction is not inside it; give a larger crossSection.depthUm`);
    }
    const depth = depths.length > 0 ? depths[0] : null;
    // A crossing beyond the neighbouring window's near edge belongs to a merged region:
    // there is no encroachment to report on that side (the spacing says "merged").
    const lefts = surfaceCrossings(grid, centre, -1).filter((x) => x > leftLimit(k));
    const rights = surfaceCrossings(grid, centre, 1).filter((x) => x < rightLimit(k));
    const stack = depths.map((d, k) => ({
      depthUm: rounded(d),
      lateralLeftUm: k < lefts.length ? rounded(x0 - lefts[k]) : null,
      lateralRightUm: k < rights.length ? rounded(rights[k] - x1) : null,
    }));
    const lateralLeft = depth !== null && lefts.length > 0 ? x0 - lefts[0] : null;
    const lateralRight = depth !== null && rights.length > 0 ? rights[0] - x1 : null;
    // The reach of the junction that meets the surface (rows from the surface down to it), or,
    // where no junction meets the surface, of a buried region's (rows between its two junctions).
    const buried = lefts.length === 0 && rights.length === 0 && depths.length > 0 && !(centreColumn[0] > 0);
    const rows: [number, number | null] | null = lateralLeft !== null || lateralRight !== null
      ? [0, depth] : buried ? [depths[0], depths.length > 1 ? depths[1] : null] : null;
    const reachOf = (side: number | null, edge: number, direction: -1 | 1, limit: number): LateralReach | null =>
      rows === null || (side === null && !buried) ? null : lateralReach(grid, centre, edge, direction, rows[0], rows[1], limit);
    const reachLeft = reachOf(lateralLeft, x0, -1, leftLimit(k));
    const reachRight = reachOf(lateralRight, x1, 1, rightLimit(k));
    reaches.push([reachLeft, reachRight]);
    const lateralMean = lateralLeft !== null && lateralRight !== null ? 0.5 * (lateralLeft + lateralRight) : lateralLeft ?? lateralRight;
    const surfaceBySpecies: Record<string, number> = {};
    const centreDose: Record<string, number> = {};
    for (const s of plan.species) {
      const profile = columnAt(speciesGrids[s.name], centre, column);
      surfaceBySpecies[s.name] = rounded(profile[0]);
      centreDose[s.name] = rounded(doseFromConcentrationUm(weightedSum(profile, mesh.dzVolume)));
    }
    return {
      x0Um: x0, x1Um: x1, centreUm: centre,
      junctionDepthUm: depth === null ? null : rounded(depth),
      junctionDepthsUm: depths.map((d) => rounded(d)),
      junctionStack: stack,
      lateralLeftUm: lateralLeft === null ? null : rounded(lateralLeft),
      lateralRightUm: lateralRight === null ? null : rounded(lateralRight),
      lateralReachLeftUm: reachLeft === null ? null : rounded(reachLeft.reachUm),
      lateralReachRightUm: reachRight === null ? null : rounded(reachRight.reachUm),
      lateralReachDepthLeftUm: reachLeft === null ? null : rounded(reachLeft.depthUm),
      lateralReachDepthRightUm: reachRight === null ? null : rounded(reachRight.depthUm),
      lateralToVerticalRatio: depth && lateralMean !== null ? rounded(lateralMean / depth, 4) : null,
      surfaceConcentrationCm3: rounded(Math.abs(columnAt(netGrid, centre, column)[0])),
      surfaceBySpeciesCm3: surfaceBySpecies,
      centreDoseCm2: centreDose,
    };
  });

  const doseCm2: Record<string, number> = {};
  for (const s of plan.species) doseCm2[s.name] = rounded(sim.ledger[s.name].inSiliconCm2);

  const results = engineeringResults(sim, field, grid, reaches);
  const report: Report = {
    schema: REPORT_SCHEMA_ID,
    title: recipe.title ?? null,
    substrate: { ...plan.substrate },
    crossSection: { widthUm: mesh.widthUm, depthUm: rounded(mesh.depthUm) },
    mesh: { columns: mesh.nx, rows: mesh.nz, finestXUm: rounded(finestX(mesh), 4), finestZUm: rounded(finestZ(mesh), 4) },
    windows: windows.map((w, k) => ({ ...w, ...results.windows[k] })),
    spacings: results.spacings,
    mobility: results.mobility,
    junctions: zeroContours(grid).map((line) => ({ polylinesUm: [line.map(([x, z]) => [rounded(x), rounded(z)] as [number, number])] })),
    doseCm2,
    activation: activationOf(sim),
    models: plan.models.map((m) => ({ ...m, species: [...m.species] })),
    ledger: sim.ledger,
    thermalBudgetUm2: Object.fromEntries(Object.keys(plan.thermalBudgetUm2).map((k) =>
      [k, rounded(plan.steps.reduce((sum, st) => sum + (st.intrinsicBudgetUm2[k] ?? 0), 0))])),
    steps: stepReports(sim),
    field: { layers: field.names, shape: [field.names.length, mesh.nz, mesh.nx] },
    warnings,
  };
  if (recipe.electrical) {
    const { fields, ...electrical } = electricalReport(mesh, field.layers.net.data, plan.mask.windows, { biasV: recipe.electrical.biasV, keepFields: true }, report.warnings);
    report.electrical = electrical;
    return { report, field, grid, ...(fields ? { electricalFields: fields } : {}) };
  }
  return { report, field, grid };
}

/** Total and active dose and peak concentrations of each species, per unit of open window. */
function activationOf(sim: Simulation): Report['activation'] {
  const { plan } = sim;
  const { mesh } = plan;
  const activation: Report['activation'] = {};
  const area = openWidth(plan);
  for (const s of plan.species) {
    const total = sim.concentration[s.name];
    const active = sim.active[s.name] ?? total;
    activation[s.name] = {
      totalDoseCm2: rounded(sim.ledger[s.name].inSiliconCm2),
      activeDoseCm2: rounded(doseFromConcentrationUm(content(active, mesh.dx, mesh.dzVolume) / area)),
      peakActiveCm3: rounded(largest(active)),
      peakTotalCm3: rounded(largest(total)),
    };
  }
  return activation;
}

/** Each process step as it ran: intrinsic budgets, time steps, ambient and oxide, TED and OED factors. */
function stepReports(sim: Simulation): Report['steps'] {
  const { plan } = sim;
  return sim.stepRecords.map((r) => {
    const st = plan.steps[r.index];
    return {
      index: r.index, kind: r.kind, temperatureC: st.temperatureC,
      thermalBudgetUm2: Object.fromEntries(Object.entries(st.intrinsicBudgetUm2).map(([k, v]) => [k, rounded(v)])),
      minutes: r.seconds / 60, timeSteps: r.timeSteps,
      ...(st.ambient !== 'inert' ? { ambient: st.ambient, oxideUm: rounded(oxideAt(st, st.seconds), 4) } : {}),
      ...(Object.keys(r.enhancement).length > 0
        ? { enhancement: Object.fromEntries(Object.entries(r.enhancement).map(([k, e]) => [k, { ted: rounded(e.ted, 4), oxidation: rounded(e.oxidation, 4) }])) }
        : {}),
    };
  });
}
