import type { ElectricalFields, ElectricalReport } from './electrical.ts';
import type { ReportResults, WindowResults } from './engineering.ts';
import type { Field } from './field.ts';
import type { NodeGrid, Polyline } from './junction.ts';
import type { REPORT_SCHEMA_ID } from './schema-ids.ts';
import type { LedgerEntry } from './simulate.ts';

/*
 * The report's types (report.json, schema edgewise.report/1): per window in 2D, per rectangle
 * and the plan view in 3D. analyze.ts and analyze3d.ts fill them; report-schema.ts checks them.
 */

export const EDGES = ['left', 'right', 'bottom', 'top'] as const;
export const CORNERS = ['bottomLeft', 'bottomRight', 'topLeft', 'topRight'] as const;
export type EdgeName = (typeof EDGES)[number];
export type CornerName = (typeof CORNERS)[number];

export interface RectangleReport {
  x0Um: number;
  y0Um: number;
  x1Um: number;
  y1Um: number;
  /** shallowest junction below the rectangle's centre, µm; null if there is none */
  junctionDepthUm: number | null;
  /** reach of the surface junction beyond each edge at its middle, along the outward normal, µm;
   *  null where that middle is not on a straight stretch of the window's outline (an edge shared
   *  with a touching rectangle, or a middle at an inside corner) */
  edgeReachUm: Record<EdgeName, number | null>;
  /** reach beyond each corner along the diagonal pointing away from the window, µm; null where
   *  the corner is not a corner of the window's outline */
  cornerReachUm: Record<CornerName, number | null>;
  /** each corner of the outline: convex (the window fills one quadrant around it) or concave (three) */
  cornerKind: Record<CornerName, 'convex' | 'concave' | null>;
  /** each corner's reach over the mean of the rectangle's edge reaches */
  cornerToEdgeRatio: Record<CornerName, number | null>;
  errors?: {
    junctionDepthUm: number | null;
    edgeReachUm: Record<EdgeName, number | null>;
    cornerReachUm: Record<CornerName, number | null>;
  };
}

export interface PlanView {
  /** every junction's outline at the surface, polylines in (x, y), µm */
  outlines: { polylinesUm: Polyline[] }[];
  /** mirror planes the solve used (x = W/2, y = L/2) */
  mirrorX: boolean;
  mirrorY: boolean;
}

export interface WindowReport extends WindowResults {
  x0Um: number;
  x1Um: number;
  centreUm: number;
  /** shallowest junction below the window centre, µm; null if there is none */
  junctionDepthUm: number | null;
  /** every junction below the window centre, from the surface down, µm */
  junctionDepthsUm: number[];
  /** each of those junctions with where it meets the surface beyond x0 and x1 (nested
   *  junctions: the k-th from the top meets the surface k-th going outward), µm */
  junctionStack: { depthUm: number; lateralLeftUm: number | null; lateralRightUm: number | null }[];
  /** reach of the surface junction beyond x0 (left) and x1 (right), under the mask, µm */
  lateralLeftUm: number | null;
  lateralRightUm: number | null;
  /** largest sideways extent of the same junction beyond x0 (left) and x1 (right) at any depth,
   *  µm: the surface lateral for a surface source, more where the region bulges below the surface
   *  (an implant); for a buried region that meets no surface, its own widest extent; null once
   *  merged with a neighbour on that side */
  lateralReachLeftUm: number | null;
  lateralReachRightUm: number | null;
  /** depth where that widest extent lies, µm (0: at the surface) */
  lateralReachDepthLeftUm: number | null;
  lateralReachDepthRightUm: number | null;
  /** mean lateral encroachment over junction depth */
  lateralToVerticalRatio: number | null;
  /** |net doping| at the surface at the window centre, cm^-3 */
  surfaceConcentrationCm3: number;
  /** each diffused species at the surface at the window centre, cm^-3 */
  surfaceBySpeciesCm3: Record<string, number>;
  /** ∫C dz of each diffused species down the window centre, cm^-2 */
  centreDoseCm2: Record<string, number>;
}

export interface Report extends ReportResults {
  schema: typeof REPORT_SCHEMA_ID;
  title: string | null;
  substrate: { dopant: string; type: string; concentrationCm3: number };
  /** lengthUm: a 3D plan view's extent in y */
  crossSection: { widthUm: number; depthUm: number; lengthUm?: number };
  /** 3D: columns (x) and columnsY (y) of the solved part, mirror planes left out */
  mesh: { columns: number; rows: number; finestXUm: number; finestZUm: number; columnsY?: number; finestYUm?: number };
  windows: WindowReport[];
  /** 3D (mask.rectangles): per rectangle, junction depth and reach at edges and corners */
  rectangles?: RectangleReport[];
  /** 3D: the plan view's junction outlines */
  plan?: PlanView;
  junctions: { polylinesUm: Polyline[] }[];
  /** dose per species per unit of open window area, cm^-2 */
  doseCm2: Record<string, number>;
  /**
   * Per species: total and active dose per unit of open window area (cm^-2), the peak active and
   * peak total concentration (cm^-3); active is all of it for a species without an inactive part.
   */
  activation: Record<string, { totalDoseCm2: number; activeDoseCm2: number; peakActiveCm3: number; peakTotalCm3: number }>;
  /** the diffusion models used, with the species each applied to and its source */
  models: { model: string; species: string[]; source: string }[];
  /** dose that entered vs dose in the silicon, per species */
  ledger: Record<string, LedgerEntry>;
  /** ∫D dt per species over the recipe with the equilibrium (intrinsic) D, µm² */
  thermalBudgetUm2: Record<string, number>;
  /**
   * per step: temperature (fixed or ramp [start, end]), duration, time steps, and ∫D dt per
   * species (intrinsic D), µm²; a drive-in or anneal in an oxidising ambient gives it and the
   * oxide in the windows at its end (µm); where TED or OED acted, each species' time-averaged
   * D_eff/D (`ted` over the section, `oxidation` where the excess is largest)
   */
  steps: {
    index: number; kind: string; temperatureC: number | [number, number] | null; minutes: number; timeSteps: number;
    thermalBudgetUm2: Record<string, number>;
    ambient?: 'dry-oxygen' | 'steam';
    oxideUm?: number;
    enhancement?: Record<string, { ted: number; oxidation: number }>;
  }[];
  /** the layers of field.npy, in order */
  /** [layers, nz, nx], or [layers, nz, ny, nx] in 3D */
  field: { layers: string[]; shape: [number, number, number] | [number, number, number, number] };
  warnings: string[];
  /** the electrical rules under reverse bias, when the recipe asks for them (electrical.ts) */
  electrical?: ElectricalReport;
}

export interface Analysis {
  report: Report;
  field: Field;
  grid: NodeGrid;
  /** the solved cross-sections of the electrical rules, when the recipe asks for them */
  electricalFields?: ElectricalFields;
}
