import type { Report } from '@edgewise/solver2d';
import { MASK_BAND_PX, type TileView } from './tile-view.ts';

/**
 * The lateral reach drawn as a dimension at each mask edge, as on a drawing: a line with
 * arrowheads above the mask, from the edge to the furthest point of the junction beyond it,
 * extension lines down to the surface at the edge and to that point (at the depth where it
 * is furthest), and the length written above. The reach is the report's
 * `lateralReachLeftUm`/`…RightUm` (any depth) where it has them, else the lateral
 * encroachment at the surface.
 */
export interface ReachDimension {
  windowIndex: number;
  side: 'left' | 'right';
  /** the mask edge, µm */
  edgeUm: number;
  /** how far the junction reaches beyond the edge, under the mask, µm */
  reachUm: number;
  /** depth where it reaches furthest, µm (0 at the surface) */
  depthUm: number;
  /** whether `reachUm` is the reach at any depth (else the surface lateral) */
  atAnyDepth: boolean;
}

type ReachFields = {
  lateralReachLeftUm?: number | null;
  lateralReachRightUm?: number | null;
  lateralReachDepthLeftUm?: number | null;
  lateralReachDepthRightUm?: number | null;
};

const isNumber = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);

export function reachDimensions(report: Report, widthUm: number): ReachDimension[] {
  const out: ReachDimension[] = [];
  report.windows.forEach((w, k) => {
    const r = w as typeof w & ReachFields;
    const sides = [
      { side: 'left' as const, edgeUm: w.x0Um, reach: r.lateralReachLeftUm, depth: r.lateralReachDepthLeftUm, surface: w.lateralLeftUm, wall: w.x0Um <= 0 },
      { side: 'right' as const, edgeUm: w.x1Um, reach: r.lateralReachRightUm, depth: r.lateralReachDepthRightUm, surface: w.lateralRightUm, wall: w.x1Um >= widthUm },
    ];
    for (const s of sides) {
      if (s.wall) continue;
      const atAnyDepth = isNumber(s.reach);
      const reachUm = atAnyDepth ? s.reach! : s.surface;
      if (!isNumber(reachUm)) continue;
      out.push({ windowIndex: k, side: s.side, edgeUm: s.edgeUm, reachUm, depthUm: atAnyDepth && isNumber(s.depth) ? s.depth : 0, atAnyDepth });
    }
  });
  return out;
}

/** Height of the dimension line above the top of the view (the top of the mask band), CSS px. */
export const DIMENSION_RISE_PX = 9;

/** Canvas points of a dimension in a view: the line's height, the edge, the reach end, the reach point's depth. */
export function dimensionGeometry(v: TileView, d: ReachDimension) {
  const px = (x: number) => v.left + (x - v.x0Um) * v.pxPerUmX;
  const py = (z: number) => v.top + (z - v.z0Um) * v.pxPerUmZ;
  const end = d.side === 'left' ? d.edgeUm - d.reachUm : d.edgeUm + d.reachUm;
  return { y: v.top - DIMENSION_RISE_PX, xEdge: px(d.edgeUm), xEnd: px(end), ySurface: py(0), yReach: py(d.depthUm) };
}

/** Whether a view shows the mask edge of a dimension. */
export function viewShowsEdge(v: TileView, d: ReachDimension): boolean {
  const x1 = v.x0Um + v.width / v.pxPerUmX;
  return d.edgeUm >= v.x0Um - 1e-9 && d.edgeUm <= x1 + 1e-9;
}

function arrowHead(ctx: CanvasRenderingContext2D, x: number, y: number, pointing: number): void {
  ctx.moveTo(x, y);
  ctx.lineTo(x - 5 * pointing, y - 2.5);
  ctx.lineTo(x - 5 * pointing, y + 2.5);
  ctx.closePath();
}

/** Draws one dimension into a view (the text is a page element: see dimensionLabel). */
export function drawDimension(ctx: CanvasRenderingContext2D, v: TileView, d: ReachDimension): void {
  const g = dimensionGeometry(v, d);
  const [a, b] = g.xEnd < g.xEdge ? [g.xEnd, g.xEdge] : [g.xEdge, g.xEnd];
  ctx.save();
  ctx.beginPath();
  ctx.rect(v.left - 40, v.top - 30, v.width + 80, v.height + 30);
  ctx.clip();
  ctx.lineWidth = 1;
  ctx.strokeStyle = '#1d2b3a';
  ctx.fillStyle = '#1d2b3a';
  // Extension lines: at the edge down to the top of the mask band, at the reach end down to
  // the surface (above the band; through the field, dashed and light, to the reach point).
  ctx.beginPath();
  ctx.moveTo(Math.round(g.xEdge) + 0.5, g.y - 4);
  ctx.lineTo(Math.round(g.xEdge) + 0.5, g.ySurface - MASK_BAND_PX - 1);
  ctx.moveTo(Math.round(g.xEnd) + 0.5, g.y - 4);
  ctx.lineTo(Math.round(g.xEnd) + 0.5, g.ySurface - MASK_BAND_PX - 1);
  ctx.moveTo(a, g.y + 0.5);
  ctx.lineTo(b, g.y + 0.5);
  ctx.stroke();
  ctx.beginPath();
  // Arrowheads pointing out to the extension lines; outside them when the span is short.
  const inside = b - a >= 14;
  arrowHead(ctx, a, g.y + 0.5, inside ? -1 : 1);
  arrowHead(ctx, b, g.y + 0.5, inside ? 1 : -1);
  ctx.fill();
  if (!inside) {
    ctx.beginPath();
    ctx.moveTo(a - 9, g.y + 0.5);
    ctx.lineTo(b + 9, g.y + 0.5);
    ctx.stroke();
  }
  if (g.yReach > g.ySurface + 1) {
    ctx.setLineDash([3, 3]);
    ctx.strokeStyle = 'rgba(255, 255, 255, 0.85)';
    ctx.beginPath();
    ctx.moveTo(Math.round(g.xEnd) + 0.5, g.ySurface);
    ctx.lineTo(Math.round(g.xEnd) + 0.5, g.yReach);
    ctx.stroke();
    ctx.setLineDash([]);
    ctx.beginPath();
    ctx.arc(g.xEnd, g.yReach, 2.5, 0, 2 * Math.PI);
    ctx.fillStyle = '#ffffff';
    ctx.fill();
  }
  ctx.restore();
}

/** The dimension's number as a page element (crisp text the tests and screen readers can read). */
export function dimensionLabel(runId: string, d: ReachDimension): HTMLElement {
  const e = document.createElement('div');
  e.className = 'dimension';
  e.dataset.runId = runId;
  e.dataset.window = String(d.windowIndex);
  e.dataset.side = d.side;
  e.dataset.um = String(d.reachUm);
  e.textContent = `${d.reachUm.toFixed(3)} µm`;
  const where = d.atAnyDepth ? (d.depthUm > 0 ? `at ${d.depthUm.toFixed(3)} µm depth` : 'at the surface') : 'at the surface (the report gives no reach below it)';
  e.title = `lateral reach beyond the ${d.side} mask edge of window ${d.windowIndex + 1}: ${d.reachUm.toFixed(4)} µm, ${where}`;
  return e;
}

/** Places a dimension's label above its line: over the span when it fits, else beside it, away from the window. */
export function placeDimensionLabel(label: HTMLElement, v: TileView, d: ReachDimension, widthPx: number): void {
  const g = dimensionGeometry(v, d);
  const span = Math.abs(g.xEnd - g.xEdge);
  let left: number;
  if (span >= widthPx + 4) left = 0.5 * (g.xEnd + g.xEdge) - widthPx / 2;
  else if (d.side === 'left') left = Math.min(g.xEnd, g.xEdge) - widthPx - 10;
  else left = Math.max(g.xEnd, g.xEdge) + 10;
  label.style.left = `${Math.round(left)}px`;
  label.style.top = `${Math.round(g.y - 15)}px`;
}

/** Labels of the dimensions drawn in the tiles' views, added to `container` (captions' layer). */
export function placeDimensionLabels(container: HTMLElement, tiles: readonly { run: { id: string }; views: TileView[]; dimensions: ReachDimension[] }[]): void {
  const placed: [HTMLElement, TileView, ReachDimension][] = [];
  for (const t of tiles) {
    for (const d of t.dimensions) {
      const v = t.views.find((view) => viewShowsEdge(view, d));
      if (!v) continue;
      const label = dimensionLabel(t.run.id, d);
      container.append(label);
      placed.push([label, v, d]);
    }
  }
  // Widths are read after every label is in the page: one layout pass for all.
  const widths = placed.map(([label]) => label.offsetWidth);
  placed.forEach(([label, v, d], k) => placeDimensionLabel(label, v, d, widths[k]));
}
