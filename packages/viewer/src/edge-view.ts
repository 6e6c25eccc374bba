import type { Report } from '@edgewise/solver2d';

/**
 * The edge view: where a cross-section is much wider than deep, a true-to-scale picture of
 * the whole width is a thin strip in which the sideways spread under the mask is a few
 * pixels. The edge view shows instead, at one scale, a window around each mask edge a few
 * junction depths across, and down to a little below the deepest junction.
 */

/** An x interval of the cross-section that a tile shows, µm. */
export interface Pane {
  x0Um: number;
  x1Um: number;
}

/** What of a tile is shown: side by side panes, each from the surface down to `depthUm`. */
export interface TileFrame {
  panes: Pane[];
  depthUm: number;
}

export interface Section {
  report: Report;
  widthUm: number;
  depthUm: number;
}

/** Each pane reaches this many junction depths either side of its mask edge. */
export const EDGE_HALF_WIDTH_XJ = 1.5;
/** The edge view shows down to this many junction depths. */
export const EDGE_DEPTH_XJ = 1.6;
/** A cross-section at least this many times wider than deep is "much wider than deep". */
export const WIDE_RATIO = 3;
/** Panes covering more than this share of the width gain too little: the tile shows it whole. */
const MOST_COVERED = 0.7;

/** Mask edges of a report: the window edges that are not at a side wall, µm. */
export function maskEdges(report: Report, widthUm: number): number[] {
  const out: number[] = [];
  for (const w of report.windows) {
    if (w.x0Um > 0) out.push(w.x0Um);
    if (w.x1Um < widthUm) out.push(w.x1Um);
  }
  return out.sort((a, b) => a - b);
}

type Extents = {
  junctionDepthsUm?: number[];
  lateralReachLeftUm?: number | null;
  lateralReachRightUm?: number | null;
  lateralReachDepthLeftUm?: number | null;
  lateralReachDepthRightUm?: number | null;
};

/**
 * The size the edge view is measured in, µm: the deepest junction under any window of any
 * section (a buried layer's lower junction too), or the furthest reach beyond an edge or its
 * depth if larger; null when no window has a junction.
 */
export function deepestJunctionUm(sections: readonly Section[]): number | null {
  let deepest = 0;
  for (const s of sections) {
    for (const w of s.report.windows) {
      const e = w as typeof w & Extents;
      const lengths = [w.junctionDepthUm, ...(e.junctionDepthsUm ?? []), e.lateralReachLeftUm, e.lateralReachRightUm, e.lateralReachDepthLeftUm, e.lateralReachDepthRightUm];
      for (const v of lengths) if (typeof v === 'number' && Number.isFinite(v)) deepest = Math.max(deepest, v);
    }
  }
  return deepest > 0 ? deepest : null;
}

/**
 * Panes of `halfWidthUm` either side of each mask edge, inside the cross-section; panes that
 * overlap or nearly touch (closer than a quarter of a half-width) become one.
 */
export function edgePanes(edges: readonly number[], halfWidthUm: number, widthUm: number): Pane[] {
  const panes: Pane[] = [];
  for (const e of edges) {
    const pane = { x0Um: Math.max(0, e - halfWidthUm), x1Um: Math.min(widthUm, e + halfWidthUm) };
    const last = panes[panes.length - 1];
    if (last && pane.x0Um - last.x1Um < 0.25 * halfWidthUm) last.x1Um = Math.max(last.x1Um, pane.x1Um);
    else panes.push(pane);
  }
  return panes;
}

/**
 * What each section shows: with `edges` asked for and a junction to size them by, the edge
 * view for the sections much wider than deep (the others whole, to the same depth); else
 * every section whole. `edges` in the answer says whether any tile shows the edge view.
 */
export function tileFrames(sections: readonly Section[], wantEdges: boolean): { frames: TileFrame[]; edges: boolean; halfWidthUm: number | null } {
  const whole = sections.map((s) => ({ panes: [{ x0Um: 0, x1Um: s.widthUm }], depthUm: s.depthUm }));
  const xj = deepestJunctionUm(sections);
  if (xj === null) return { frames: whole, edges: false, halfWidthUm: null };
  const halfWidthUm = EDGE_HALF_WIDTH_XJ * xj;
  const framed = sections.map((s) => {
    const panes = edgePanes(maskEdges(s.report, s.widthUm), halfWidthUm, s.widthUm);
    const covered = panes.reduce((sum, p) => sum + p.x1Um - p.x0Um, 0);
    const wide = s.widthUm >= WIDE_RATIO * s.depthUm && panes.length > 0 && covered <= MOST_COVERED * s.widthUm;
    return wide ? { panes, depthUm: Math.min(s.depthUm, EDGE_DEPTH_XJ * xj) } : null;
  });
  const edges = framed.some((f) => f !== null);
  if (!wantEdges || !edges) return { frames: whole, edges, halfWidthUm };
  const depthUm = Math.min(...sections.map((s) => Math.min(s.depthUm, EDGE_DEPTH_XJ * xj)));
  return { frames: framed.map((f, k) => f ?? { panes: whole[k].panes, depthUm }), edges, halfWidthUm };
}
