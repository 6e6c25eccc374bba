import type { Pane } from './edge-view.ts';
import { MASK_BAND_PX, type TileView } from './tile-view.ts';

/**
 * Grid layout of the tiles with one length scale for all: the same pixels per µm across
 * every tile, and the same pixels per µm down (depth may be drawn stretched by a whole
 * factor, which the axes say), so widths and depths compare at a glance.
 */

export interface Extent {
  widthUm: number;
  depthUm: number;
  /** x intervals shown side by side (the edge view); the whole width when absent */
  panes?: Pane[];
}

const BAND = MASK_BAND_PX + 1;

/**
 * Room around each tile's plot, CSS px: the reach dimensions above, the depth axis and its
 * label left, the x axis, its label and the caption below (`bottom` grows with the caption).
 */
export const MARGIN = { left: 58, right: 14, top: 38, bottom: 84 };
/** Between two panes of a tile, CSS px. */
export const PANE_GAP_PX = 18;
/** Height of one caption line, CSS px (11 px text). */
export const CAPTION_LINE_PX = 14;

export interface GridLayout {
  columns: number;
  rows: number;
  cellWidth: number;
  cellHeight: number;
  pxPerUmX: number;
  pxPerUmZ: number;
  /** depth drawn this many times larger than width */
  stretch: number;
  /** per tile, one view per pane, left to right */
  views: TileView[][];
}

/**
 * Columns of a sweep over two parameters or more: one per value of the last (fastest)
 * parameter when it has at most eight, so each row is one value of the others.
 */
export function sweepColumns(parameters: string[], values: Record<string, number | string>[]): number | undefined {
  if (parameters.length < 2) return undefined;
  const last = parameters[parameters.length - 1];
  const distinct = new Set(values.map((v) => String(v[last])));
  return distinct.size <= 8 ? distinct.size : undefined;
}

/** Stretches offered when the depth is much smaller than the width. */
export const STRETCHES = [1, 2, 5, 10, 20, 50];

function panesOf(e: Extent): Pane[] {
  return e.panes ?? [{ x0Um: 0, x1Um: e.widthUm }];
}

/** Width of the panes of an extent, µm (without the gaps). */
function shownWidthUm(e: Extent): number {
  return panesOf(e).reduce((sum, p) => sum + p.x1Um - p.x0Um, 0);
}

/**
 * Lays out tiles of the given extents in a grid filling `area`. `stretch` 0 tries each of
 * STRETCHES and keeps the layout whose tiles cover the most pixels (the smaller stretch
 * when two come within 10 %). `captionLines` sizes the room under each tile.
 */
export function layoutGrid(extents: Extent[], area: { width: number; height: number }, stretch = 0, fixedColumns?: number, captionLines = 4): GridLayout {
  const n = extents.length;
  const maxW = Math.max(...extents.map(shownWidthUm));
  const maxD = Math.max(...extents.map((e) => e.depthUm));
  const maxGaps = PANE_GAP_PX * Math.max(...extents.map((e) => panesOf(e).length - 1));
  const bottom = Math.max(MARGIN.bottom, 28 + CAPTION_LINE_PX * captionLines);
  let best: { layout: GridLayout; pixels: number } | null = null;
  for (const s of stretch > 0 ? [stretch] : STRETCHES) {
    for (let columns = 1; columns <= n; columns++) {
      if (fixedColumns && columns !== Math.min(n, fixedColumns)) continue;
      const layout = gridAt(extents, area, s, columns, { maxW, maxD, maxGaps, bottom });
      const pixels = layout.pxPerUmX * maxW * layout.pxPerUmZ * maxD;
      if (!best || pixels > best.pixels * (layout.stretch > best.layout.stretch ? 1.1 : 1)) best = { layout, pixels };
    }
  }
  return best!.layout;
}

interface Bounds {
  maxW: number;
  maxD: number;
  maxGaps: number;
  bottom: number;
}

function gridAt(extents: Extent[], area: { width: number; height: number }, s: number, columns: number, b: Bounds): GridLayout {
  const rows = Math.max(1, Math.ceil(extents.length / columns));
  const cellWidth = Math.floor(area.width / columns);
  const cellHeight = Math.floor(area.height / rows);
  const plotW = Math.max(10, cellWidth - MARGIN.left - MARGIN.right - b.maxGaps);
  const plotH = Math.max(10, cellHeight - MARGIN.top - b.bottom);
  const pxX = Math.min(plotW / b.maxW, plotH / (b.maxD * s));
  const pxZ = pxX * s;
  const views = extents.map((e, k) => {
    let left = (k % columns) * cellWidth + MARGIN.left;
    const top = Math.floor(k / columns) * cellHeight + MARGIN.top - BAND;
    return panesOf(e).map((p) => {
      const width = Math.max(1, Math.round((p.x1Um - p.x0Um) * pxX));
      const view = {
        left, top, width, height: Math.max(1, Math.round(e.depthUm * pxZ)) + BAND,
        x0Um: p.x0Um, z0Um: -BAND / pxZ, pxPerUmX: pxX, pxPerUmZ: pxZ,
      };
      left += width + PANE_GAP_PX;
      return view;
    });
  });
  return { columns, rows, cellWidth, cellHeight, pxPerUmX: pxX, pxPerUmZ: pxZ, stretch: s, views };
}

/** The focused tile: the whole area, the world window given by pan and zoom. */
export interface FocusState {
  /** world point at the centre of the plot, µm */
  centreXUm: number;
  centreZUm: number;
  pxPerUmX: number;
  stretch: number;
}

export function focusPlotRect(area: { width: number; height: number }) {
  return {
    left: MARGIN.left + 8,
    top: MARGIN.top + 8,
    width: Math.max(10, area.width - MARGIN.left - MARGIN.right - 16),
    height: Math.max(10, area.height - MARGIN.top - 90),
  };
}

/** Pan and zoom that show a pane of a cross-section (from the surface down to `depthUm`) in the area. */
export function fitFocus(pane: Pane, depthUm: number, area: { width: number; height: number }, stretch: number): FocusState {
  const rect = focusPlotRect(area);
  const widthUm = pane.x1Um - pane.x0Um;
  // Automatic: the largest stretch at which the whole width still fits across the area.
  const s = stretch > 0 ? stretch : Math.max(1, ...STRETCHES.filter((c) => widthUm / (depthUm * c) >= rect.width / rect.height));
  const pxX = Math.min(rect.width / widthUm, (rect.height - 2 * BAND) / (depthUm * s));
  // Leave the mask band above the surface in view.
  return { centreXUm: 0.5 * (pane.x0Um + pane.x1Um), centreZUm: depthUm / 2 - BAND / (pxX * s) / 2, pxPerUmX: pxX, stretch: s };
}

export function focusView(state: FocusState, area: { width: number; height: number }): TileView {
  const rect = focusPlotRect(area);
  const pxZ = state.pxPerUmX * state.stretch;
  return {
    ...rect,
    x0Um: state.centreXUm - rect.width / 2 / state.pxPerUmX,
    z0Um: state.centreZUm - rect.height / 2 / pxZ,
    pxPerUmX: state.pxPerUmX,
    pxPerUmZ: pxZ,
  };
}

/** Zoom by `factor` about the canvas point (px, py), keeping the world point under it fixed. */
export function zoomAbout(state: FocusState, area: { width: number; height: number }, px: number, py: number, factor: number): FocusState {
  const view = focusView(state, area);
  const wx = view.x0Um + (px - view.left) / view.pxPerUmX;
  const wz = view.z0Um + (py - view.top) / view.pxPerUmZ;
  const pxX = state.pxPerUmX * factor;
  const pxZ = pxX * state.stretch;
  const rect = focusPlotRect(area);
  return {
    ...state,
    pxPerUmX: pxX,
    centreXUm: wx - (px - rect.left) / pxX + rect.width / 2 / pxX,
    centreZUm: wz - (py - rect.top) / pxZ + rect.height / 2 / pxZ,
  };
}

export function pan(state: FocusState, dxPx: number, dyPx: number): FocusState {
  return {
    ...state,
    centreXUm: state.centreXUm - dxPx / state.pxPerUmX,
    centreZUm: state.centreZUm - dyPx / (state.pxPerUmX * state.stretch),
  };
}
