import { edgeCurvature } from './curvature.ts';
import type { ErrorBars, ErrorEstimateSummary, WindowErrorKey } from './error-estimate.ts';
import type { Field } from './field.ts';
import { columnAt, surfaceCrossing, wallPaddedGrid, zeroContours, type NodeGrid } from './junction.ts';
import { fitForDopant, type Carrier, type MobilityFit } from './mobility.ts';
import { invertedNodes, labelRegions, surfaceRegionAt } from './region.ts';
import { effectiveWidthUm, lineResistanceOhmPerUm, regionConductance, sheetConductanceS } from './resistance.ts';
import type { Simulation } from './simulate.ts';
import { contourEndingAt, neighbourPairs, pairSpacing, type PairSpacing } from './spacing.ts';

/**
 * The numbers a layout or process rule is written from, per window and per pair of
 * neighbouring windows: sheet and line resistance, effective width, edge curvature, spacing.
 * Each is computed in its own module; this one only gathers them for the report.
 */
export interface WindowResults {
  /** sheet resistance of the layer below the window centre, surface to junction, Ω/sq */
  sheetResistanceOhmSq?: number | null;
  /** resistance per µm of a long line of this window's drawn width, from the whole diffused region, Ω/µm */
  lineResistanceOhmPerUm?: number | null;
  /** width that carries the line's conductance at the centre's sheet resistance, µm */
  effectiveWidthUm?: number | null;
  /** drawn width plus the lateral encroachment on both sides, µm, for comparison */
  drawnPlusLateralUm?: number | null;
  /** radius of curvature of the junction where it turns under the left and right mask edge, µm */
  curvatureRadiusLeftUm?: number | null;
  curvatureRadiusRightUm?: number | null;
  /** numerical error of each of the fields above, in the same unit (see Report.errorEstimate) */
  errors?: ErrorBars<WindowErrorKey>;
}

export interface ReportResults {
  /** neighbouring windows, in x order */
  spacings?: PairSpacing[];
  /** the mobility fit used for the layer's majority carriers */
  mobility?: { carrier: Carrier; fit: string; source: string };
  /** how the error bars were made; present when coarser solves were run */
  errorEstimate?: ErrorEstimateSummary;
}

export interface EngineeringResults extends ReportResults {
  windows: WindowResults[];
}

function rounded(v: number | null, digits = 6): number | null {
  return v === null || !Number.isFinite(v) ? null : Number(v.toPrecision(digits));
}

/** The fit for the diffused layer: its carriers are those of the species opposite to the substrate with the most dose. */
function layerFit(sim: Simulation): MobilityFit {
  const { plan } = sim;
  const carrier: Carrier = plan.substrate.type === 'donor' ? 'hole' : 'electron';
  const wanted = carrier === 'hole' ? 'acceptor' : 'donor';
  let majority = '';
  let most = -Infinity;
  for (const s of plan.species) {
    const dose = sim.ledger[s.name]?.inSiliconCm2 ?? 0;
    if (s.type === wanted && dose > most) {
      most = dose;
      majority = s.name;
    }
  }
  return fitForDopant(majority, carrier);
}

export function engineeringResults(sim: Simulation, field: Field, grid: NodeGrid): EngineeringResults {
  const { mesh } = field;
  const windows = sim.plan.mask.windows;
  const fit = layerFit(sim);
  const regions = labelRegions(invertedNodes(field.donors, field.acceptors, sim.plan.substrate.type), mesh.nx, mesh.nz);
  const contours = zeroContours(grid);
  const donorGrid = wallPaddedGrid(mesh, field.donors);
  const acceptorGrid = wallPaddedGrid(mesh, field.acceptors);
  const donorColumn = new Float64Array(mesh.nz);
  const acceptorColumn = new Float64Array(mesh.nz);
  const indicatorColumn = new Float64Array(mesh.nz);

  const perWindow = windows.map(([x0, x1]): WindowResults => {
    const centre = 0.5 * (x0 + x1);
    const label = surfaceRegionAt(regions, mesh, centre);
    const column = columnAt(grid, centre, indicatorColumn);
    if (label === 0 || !(column[0] > 0)) {
      return { sheetResistanceOhmSq: null, lineResistanceOhmPerUm: null, effectiveWidthUm: null, drawnPlusLateralUm: null, curvatureRadiusLeftUm: null, curvatureRadiusRightUm: null };
    }
    let depth = mesh.depthUm;
    for (let j = 0; j + 1 < mesh.nz; j++) {
      if (column[j] > 0 && !(column[j + 1] > 0)) {
        depth = mesh.z[j] + (mesh.z[j + 1] - mesh.z[j]) * (column[j] / (column[j] - column[j + 1]));
        break;
      }
    }
    const sheet = sheetConductanceS(columnAt(donorGrid, centre, donorColumn), columnAt(acceptorGrid, centre, acceptorColumn), mesh.z, depth, fit);
    const area = regionConductance(mesh, field.donors, field.acceptors, regions, label, fit);
    const left = surfaceCrossing(grid, centre, -1);
    const right = surfaceCrossing(grid, centre, 1);
    // An edge whose junction has merged with a neighbour's meets the surface beyond that
    // neighbour: its turn belongs to the neighbour's outer edge, not to this window.
    const beyondNeighbour = (x: number) => windows.some(([a, b]) => (a !== x0 || b !== x1) && (x < x0 ? b > x && b <= x0 : a < x && a >= x1));
    const radius = (x: number | null) => {
      if (x === null || beyondNeighbour(x)) return null;
      const line = contourEndingAt(contours, x);
      return line ? edgeCurvature(grid, line, x)?.radiusUm ?? null : null;
    };
    return {
      sheetResistanceOhmSq: rounded(1 / sheet),
      lineResistanceOhmPerUm: rounded(lineResistanceOhmPerUm(area)),
      effectiveWidthUm: rounded(effectiveWidthUm(area, sheet)),
      drawnPlusLateralUm: left !== null && right !== null ? rounded(right - left) : null,
      curvatureRadiusLeftUm: rounded(radius(left)),
      curvatureRadiusRightUm: rounded(radius(right)),
    };
  });

  const spacings = neighbourPairs(windows).map(([l, r]) => {
    const s = pairSpacing(grid, contours, mesh, regions, windows, l, r);
    return { ...s, surfaceGapUm: rounded(s.surfaceGapUm), minimumGapUm: rounded(s.minimumGapUm), minimumGapDepthUm: rounded(s.minimumGapDepthUm) };
  });
  return { windows: perWindow, spacings, mobility: { carrier: fit.carrier, fit: fit.name, source: fit.source } };
}
