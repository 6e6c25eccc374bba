import { captionLines } from './caption.ts';
import { tileFrames, type Pane } from './edge-view.ts';
import { focusView, layoutGrid, sweepColumns, type GridLayout } from './layout.ts';
import type { Mode } from './pointer.ts';
import type { Tile } from './tile.ts';
import { viewContains, type TileView } from './tile-view.ts';

/**
 * Where every tile goes for a mode: in the grid, each tile's panes (the whole width, or
 * the edge view) at one scale for all; in focus, the one tile at its pan and zoom.
 */
export interface Arrangement {
  grid: GridLayout | null;
  /** depth drawn this many times larger than width */
  stretch: number;
  /** whether some tile can show the edge view, and whether the grid shows it */
  edgesAvailable: boolean;
  edgesShown: boolean;
  /** half-width of an edge pane, µm */
  halfWidthUm: number | null;
}

export interface ArrangeOptions {
  area: { width: number; height: number };
  stretch: number;
  edges: boolean;
  parameters: string[];
}

export function arrange(tiles: readonly Tile[], mode: Mode, o: ArrangeOptions): Arrangement {
  for (const t of tiles) t.setViews([]);
  // Sections of 3D runs are shown whole (a plan view's "depth" is its length; a cut's few
  // edges are seen whole at the plan view's scale); the edge view is for the 2D tiles.
  const flat = tiles.filter((t) => !t.run.section);
  const framing = tileFrames(flat.map((t) => ({ report: t.run.report, widthUm: t.widthUm, depthUm: t.depthUm })), o.edges);
  let next = 0;
  const frames = tiles.map((t) => (t.run.section ? { panes: [{ x0Um: 0, x1Um: t.widthUm }], depthUm: t.depthUm } : framing.frames[next++]));
  const common = { edgesAvailable: framing.edges, edgesShown: o.edges && framing.edges, halfWidthUm: framing.halfWidthUm };
  if (mode.kind === 'focus') {
    mode.tile.setViews([focusView(mode.state, o.area)]);
    return { grid: null, stretch: mode.state.stretch, ...common };
  }
  if (tiles.length === 0) return { grid: null, stretch: o.stretch, ...common };
  const columns = sweepColumns(o.parameters, tiles.map((t) => t.run.values));
  const extents = tiles.map((t, k) => ({ widthUm: t.widthUm, depthUm: frames[k].depthUm, panes: frames[k].panes }));
  const lines = Math.max(...tiles.map((t) => captionLines(t.run.report)));
  const grid = layoutGrid(extents, o.area, o.stretch, columns, lines);
  tiles.forEach((t, k) => t.setViews(grid.views[k]));
  return { grid, stretch: grid.stretch, ...common };
}

/** The tile of the grid cell under a canvas point, and its pane nearest the point (with the depth it shows). */
export function tileAt(tiles: readonly Tile[], grid: GridLayout, px: number, py: number): { tile: Tile; pane: Pane; depthUm: number } | null {
  const col = Math.floor(px / grid.cellWidth);
  const row = Math.floor(py / grid.cellHeight);
  if (col < 0 || col >= grid.columns || row < 0) return null;
  const tile = tiles[row * grid.columns + col];
  if (!tile || tile.views.length === 0) return null;
  let best = tile.views[0];
  for (const v of tile.views) if (px >= v.left) best = v;
  return { tile, pane: { x0Um: best.x0Um, x1Um: best.x0Um + best.width / best.pxPerUmX }, depthUm: best.z0Um + best.height / best.pxPerUmZ };
}

/** The drawn view under a canvas point, and its tile. */
export function viewAt(tiles: readonly Tile[], px: number, py: number): { tile: Tile; view: TileView } | null {
  for (const tile of tiles) for (const view of tile.views) if (viewContains(view, px, py)) return { tile, view };
  return null;
}

/** The side bar's note on the scale and on what the tiles show. */
export function scaleNote(a: Arrangement, focused: boolean): string {
  const shape = a.stretch === 1 ? 'true shape: one µm across is one µm down' : `depth drawn ×${a.stretch}`;
  let text = `Lengths in µm, one scale for every tile (${shape}).`;
  if (!focused && a.edgesShown && a.halfWidthUm !== null) {
    text += ` Edge view: ${a.halfWidthUm.toPrecision(2)} µm either side of each mask edge; "Full width" above shows the whole cross-section.`;
  }
  return text;
}
