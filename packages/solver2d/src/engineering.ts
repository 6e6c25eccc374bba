import { edgeCurvature } from './curvature.ts';
import type { ErrorBars, ErrorEstimateSummary, WindowErrorKey } from './error-bars.ts';
import type { Field } from './field.ts';
import { columnAt, crossings, surfaceCrossing, wallPaddedGrid, zeroContours, type LateralReach, type NodeGrid } from './junction.ts';
import { fitForDopant, type Carrier, type MobilityFit } from './mobility.ts';
import { invertedNodes, labelRegions, reachesBottom, surfaceRegionAt, type Regions } from './region.ts';
import { effectiveWidthUm, layerConductanceS, lineResistanceOhmPerUm, regionConductance } from './resistance.ts';
import type { Simulation } from './simulate.ts';
import { contourEndingAt, noSpacing, pairSpacing, type PairSpacing } from './spacing.ts';

/** One layer of the column below a window centre, between two junctions or the surface and a junction. */
interface LayerResult {
  /** n or p: the sign of the net doping */
  type: 'n' | 'p';
  /** from the surface or a junction down to the next junction, µm */
  topUm: number;
  bottomUm: number;
  /** sheet resistance of the layer alone (a buried layer's is its pinched value), Ω/sq */
  sheetResistanceOhmSq: number | null;
  /** the mobility fit for the layer's majority carriers (see mobility.ts) */
  mobilityFit: string;
  errors?: { sheetResistanceOhmSq?: number | null };
}

/**
 * The numbers a layout or process rule is written from, per window and per pair of
 * neighbouring windows: sheet and line resistance, effective width, edge curvature, spacing.
 * Each is computed in its own module; this one only gathers them for the report.
 */
export interface WindowResults {
  /** sheet resistance of the surface layer below the window centre, surface to junction, Ω/sq */
  sheetResistanceOhmSq?: number | null;
  /** resistance per µm of a long line of this window's drawn width, from the whole diffused region, Ω/µm */
  lineResistanceOhmPerUm?: number | null;
  /** width that carries the line's conductance at the centre's sheet resistance, µm */
  effectiveWidthUm?: number | null;
  /** drawn width plus the lateral encroachment on both sides, µm, for comparison: the lateral
   *  reach at any depth where it is known (larger than the surface lateral where the junction
   *  bulges below the surface), the surface lateral where it is not */
  drawnPlusLateralUm?: number | null;
  /** radius of curvature of the junction where it turns under the left and right mask edge, µm */
  curvatureRadiusLeftUm?: number | null;
  curvatureRadiusRightUm?: number | null;
  /** every layer below the window centre that a junction bounds, from the surface down */
  layerStack?: LayerResult[];
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

interface EngineeringResults extends ReportResults {
  windows: WindowResults[];
}

function rounded(v: number | null, digits = 6): number | null {
  return v === null || !Number.isFinite(v) ? null : Number(v.toPrecision(digits));
}

/**
 * The fit for a layer of type `sign` (+1 n, −1 p): its carriers' own, for the species of that
 * type with the most dose in the layer down the column (the substrate dopant where no
 * diffused species of that type is there).
 */
function layerFit(sim: Simulation, species: Record<string, Float64Array>, z: Float64Array, topUm: number, bottomUm: number, sign: number): MobilityFit {
  const carrier: Carrier = sign > 0 ? 'electron' : 'hole';
  const wanted = sign > 0 ? 'donor' : 'acceptor';
  const { substrate } = sim.plan;
  let majority = substrate.type === wanted ? substrate.dopant : '';
  let most = substrate.type === wanted ? substrate.concentrationCm3 * (bottomUm - topUm) : 0;
  for (const s of sim.plan.species) {
    if (s.type !== wanted) continue;
    const dose = layerDose(species[s.name], z, topUm, bottomUm);
    if (dose > most) {
      most = dose;
      majority = s.name;
    }
  }
  return fitForDopant(majority, carrier);
}

/** ∫C dz over [topUm, bottomUm] of a column, by the trapezoidal rule on the nodes and the two ends. */
function layerDose(c: Float64Array, z: Float64Array, topUm: number, bottomUm: number): number {
  const at = (depth: number) => {
    let j = 1;
    while (j + 1 < z.length && z[j] < depth) j++;
    const t = Math.min(1, Math.max(0, (depth - z[j - 1]) / (z[j] - z[j - 1])));
    return (1 - t) * c[j - 1] + t * c[j];
  };
  let sum = 0;
  let prevZ = topUm;
  let prev = at(topUm);
  for (let j = 0; j < z.length; j++) {
    if (z[j] <= topUm) continue;
    if (z[j] >= bottomUm) break;
    sum += 0.5 * (prev + c[j]) * (z[j] - prevZ);
    prevZ = z[j];
    prev = c[j];
  }
  return sum + 0.5 * (prev + at(bottomUm)) * (bottomUm - prevZ);
}

/** The fit reported for the whole run before any window has a layer: the carriers of the type opposite to the substrate. */
function substrateOppositeFit(sim: Simulation): MobilityFit {
  const carrier: Carrier = sim.plan.substrate.type === 'donor' ? 'hole' : 'electron';
  const wanted = carrier === 'hole' ? 'acceptor' : 'donor';
  let majority = '';
  let most = -Infinity;
  for (const s of sim.plan.species) {
    const dose = sim.ledger[s.name]?.inSiliconCm2 ?? 0;
    if (s.type === wanted && dose > most) {
      most = dose;
      majority = s.name;
    }
  }
  return fitForDopant(majority, carrier);
}

/**
 * Drawn width plus the encroachment on both sides: the lateral reach at any depth where both
 * are known (the wider of the two measures), else the span of the surface crossings.
 */
function drawnPlusLateral(x0: number, x1: number, left: number | null, right: number | null,
                          reach: readonly [LateralReach | null, LateralReach | null] | undefined): number | null {
  if (left === null || right === null) return null;
  const [l, r] = reach ?? [null, null];
  if (l !== null && r !== null) return rounded(Math.max(right - left, x1 - x0 + l.reachUm + r.reachUm));
  return rounded(right - left);
}

function noResults(): WindowResults {
  return {
    sheetResistanceOhmSq: null, lineResistanceOhmPerUm: null, effectiveWidthUm: null, drawnPlusLateralUm: null,
    curvatureRadiusLeftUm: null, curvatureRadiusRightUm: null, layerStack: [],
  };
}

/** `reaches`: per window, the lateral reach beyond its left and right edge (analyze.ts), where known. */
export function engineeringResults(sim: Simulation, field: Field, grid: NodeGrid,
                                   reaches: readonly (readonly [LateralReach | null, LateralReach | null])[] = []): EngineeringResults {
  const { mesh } = field;
  const windows = sim.plan.mask.windows;
  const inverted = invertedNodes(field.donors, field.acceptors, sim.plan.substrate.type);
  const regions = labelRegions(inverted, mesh.nx, mesh.nz);
  // The regions of the substrate's type, for a surface layer of that type (an emitter or a
  // source/drain in a well): labelled only when some window needs them.
  let substrateType: Regions | null = null;
  const substrateTypeRegions = () => {
    if (substrateType === null) {
      const same = new Uint8Array(inverted.length);
      for (let k = 0; k < same.length; k++) same[k] = 1 - inverted[k];
      substrateType = labelRegions(same, mesh.nx, mesh.nz);
    }
    return substrateType;
  };
  let grids: Record<string, NodeGrid> | null = null;
  const speciesGrids = () => (grids ??= Object.fromEntries(sim.plan.species.map((s) => [s.name, wallPaddedGrid(mesh, sim.concentration[s.name])])));
  const contours = zeroContours(grid);
  const donorGrid = wallPaddedGrid(mesh, field.donors);
  const acceptorGrid = wallPaddedGrid(mesh, field.acceptors);
  const donorColumn = new Float64Array(mesh.nz);
  const acceptorColumn = new Float64Array(mesh.nz);
  const indicatorColumn = new Float64Array(mesh.nz);
  let topFit: MobilityFit | null = null;

  const perWindow = windows.map(([x0, x1], windowIndex): WindowResults => {
    const centre = 0.5 * (x0 + x1);
    const column = columnAt(grid, centre, indicatorColumn);
    const depths = crossings(column, mesh.z);
    const surfaceInverted = column[0] > 0;
    // A layer of the substrate's type at the surface is a layer of its own only where a
    // junction lies below it; one of the other type with none reaches the bottom (warned).
    if (!surfaceInverted && depths.length === 0) return noResults();
    if (depths.length === 0) depths.push(mesh.depthUm);
    const regionSet = surfaceInverted ? regions : substrateTypeRegions();
    const label = surfaceRegionAt(regionSet, mesh, centre);
    if (label === 0 || !(Math.abs(column[0]) > 0)) return noResults();
    const donors = columnAt(donorGrid, centre, donorColumn);
    const acceptors = columnAt(acceptorGrid, centre, acceptorColumn);
    const species = Object.fromEntries(sim.plan.species.map((s) => [s.name, columnAt(speciesGrids()[s.name], centre, new Float64Array(mesh.nz))]));
    const surfaceSign = Math.sign(donors[0] - acceptors[0]);
    const layers = depths.map((bottom, k) => {
      const top = k === 0 ? 0 : depths[k - 1];
      const sign = k % 2 === 0 ? surfaceSign : -surfaceSign;
      const fit = layerFit(sim, species, mesh.z, top, bottom, sign);
      return { top, bottom, sign, fit, conductance: layerConductanceS(donors, acceptors, mesh.z, top, bottom, sign, fit) };
    });
    const surface = layers[0];
    topFit ??= surface.fit;
    const sheet = surface.conductance;
    // A surface layer joined to the substrate beside the centre is no line of its own.
    const isolated = surfaceInverted || !reachesBottom(regionSet, label, mesh.nx, mesh.nz);
    const area = isolated ? regionConductance(mesh, field.donors, field.acceptors, regionSet, label, surface.fit) : NaN;
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
      drawnPlusLateralUm: drawnPlusLateral(x0, x1, left, right, reaches[windowIndex]),
      curvatureRadiusLeftUm: rounded(radius(left)),
      curvatureRadiusRightUm: rounded(radius(right)),
      layerStack: layers.map((l) => ({
        type: l.sign > 0 ? 'n' : 'p',
        topUm: rounded(l.top)!,
        bottomUm: rounded(l.bottom)!,
        sheetResistanceOhmSq: rounded(1 / l.conductance),
        mobilityFit: l.fit.name,
      })),
    };
  });

  const substrateLetter = sim.plan.substrate.type === 'donor' ? 'n' : 'p';
  const spacings = sim.plan.mask.pairs.map(([l, r]) => {
    // Two windows without a layer at the centre, or whose surface layers differ in type, have no gap to give.
    const typeL = perWindow[l].layerStack?.[0]?.type;
    const typeR = perWindow[r].layerStack?.[0]?.type;
    const s = typeL !== undefined && typeL === typeR
      ? pairSpacing(grid, contours, mesh, typeL === substrateLetter ? substrateTypeRegions() : regions, windows, l, r, typeL === substrateLetter)
      : noSpacing(windows, l, r);
    return { ...s, surfaceGapUm: rounded(s.surfaceGapUm), minimumGapUm: rounded(s.minimumGapUm), minimumGapDepthUm: rounded(s.minimumGapDepthUm) };
  });
  const fit = topFit ?? substrateOppositeFit(sim);
  return { windows: perWindow, spacings, mobility: { carrier: fit.carrier, fit: fit.name, source: fit.source } };
}
