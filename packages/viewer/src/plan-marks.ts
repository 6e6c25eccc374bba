import type { ReachMark, SectionInfo } from './cuts3d.ts';
import type { TileView } from './tile-view.ts';

/**
 * What the plan view of a 3D run draws over the field: the mask's rectangles (the window's
 * outline), and each reach of the report as a dimension, from an edge's middle along its
 * outward normal and from a corner along its outward diagonal to where the junction meets
 * the surface, with the length written at its end (a page element, as the 2D dimensions).
 */

/** Canvas point of a plan-view point (x, y in µm): y points up, the tile's depth is length − y. */
function toCanvas(v: TileView, info: SectionInfo, xUm: number, yUm: number): [number, number] {
  return [v.left + (xUm - v.x0Um) * v.pxPerUmX, v.top + (info.downFromUm! - yUm - v.z0Um) * v.pxPerUmZ];
}

/** The two ends of a mark on the canvas: the outline point and the reach's end. */
export function markGeometry(v: TileView, info: SectionInfo, m: ReachMark): { from: [number, number]; to: [number, number] } {
  return { from: toCanvas(v, info, m.xUm, m.yUm), to: toCanvas(v, info, m.xUm + m.ux * m.reachUm, m.yUm + m.uy * m.reachUm) };
}

function arrowHead(ctx: CanvasRenderingContext2D, at: [number, number], ux: number, uy: number): void {
  // ux, uy: unit direction the head points, in canvas px
  const [x, y] = at;
  ctx.moveTo(x, y);
  ctx.lineTo(x - 6 * ux - 2.5 * uy, y - 6 * uy + 2.5 * ux);
  ctx.lineTo(x - 6 * ux + 2.5 * uy, y - 6 * uy - 2.5 * ux);
  ctx.closePath();
}

export function drawPlanMarks(ctx: CanvasRenderingContext2D, v: TileView, info: SectionInfo): void {
  if (info.downFromUm === null) return;
  ctx.save();
  ctx.beginPath();
  ctx.rect(v.left, v.top, v.width, v.height);
  ctx.clip();
  ctx.lineWidth = 1.5;
  ctx.setLineDash([5, 3]);
  ctx.strokeStyle = '#1d2b3a';
  ctx.beginPath();
  for (const [x0, y0, x1, y1] of info.rectangles) {
    const [a, b] = toCanvas(v, info, x0, y1);
    const [c, d] = toCanvas(v, info, x1, y0);
    ctx.rect(a, b, c - a, d - b);
  }
  ctx.stroke();
  ctx.setLineDash([]);
  ctx.lineWidth = 1;
  for (const m of info.marks) {
    const { from, to } = markGeometry(v, info, m);
    const len = Math.hypot(to[0] - from[0], to[1] - from[1]);
    if (!(len > 0)) continue;
    const ux = (to[0] - from[0]) / len;
    const uy = (to[1] - from[1]) / len;
    ctx.strokeStyle = '#ffffff';
    ctx.lineWidth = 3;
    ctx.beginPath();
    ctx.moveTo(from[0], from[1]);
    ctx.lineTo(to[0], to[1]);
    ctx.stroke();
    ctx.strokeStyle = '#1d2b3a';
    ctx.fillStyle = '#1d2b3a';
    ctx.lineWidth = 1;
    ctx.beginPath();
    ctx.moveTo(from[0], from[1]);
    ctx.lineTo(to[0], to[1]);
    ctx.stroke();
    ctx.beginPath();
    arrowHead(ctx, to, ux, uy);
    arrowHead(ctx, from, -ux, -uy);
    ctx.fill();
  }
  ctx.restore();
}

const MARK_WORDS: Record<string, string> = {
  left: 'left edge', right: 'right edge', bottom: 'bottom edge', top: 'top edge',
  bottomLeft: 'bottom-left corner', bottomRight: 'bottom-right corner', topLeft: 'top-left corner', topRight: 'top-right corner',
};

export function planMarkLabel(runId: string, m: ReachMark): HTMLElement {
  const e = document.createElement('div');
  e.className = 'dimension plan-reach';
  e.dataset.runId = runId;
  e.dataset.kind = m.kind;
  e.dataset.name = m.name;
  e.dataset.rectangle = String(m.rectangle);
  e.dataset.um = String(m.reachUm);
  e.textContent = `${m.reachUm.toFixed(3)} µm`;
  const along = m.kind === 'corner' ? 'along the outward diagonal' : 'along the outward normal at the middle';
  const error = m.errorUm === null ? '' : ` ± ${m.errorUm.toPrecision(2)}`;
  e.title = `reach of the surface junction beyond the ${MARK_WORDS[m.name] ?? m.name} of rectangle ${m.rectangle + 1}, ${along}: ${m.reachUm.toFixed(4)}${error} µm`;
  return e;
}

/** Labels of the plan views' reaches, each just beyond its arrow's end, added to `container` (the captions' layer). */
export function placePlanLabels(container: HTMLElement, tiles: readonly { run: { id: string; section?: SectionInfo }; views: TileView[] }[]): void {
  const placed: [HTMLElement, [number, number], [number, number]][] = [];
  for (const t of tiles) {
    const info = t.run.section;
    const v = t.views[0];
    if (!info || info.downFromUm === null || !v) continue;
    for (const m of info.marks) {
      const { to } = markGeometry(v, info, m);
      const label = planMarkLabel(t.run.id, m);
      container.append(label);
      // Canvas direction of the mark (y up in the plan is up the screen).
      placed.push([label, to, [m.ux, -m.uy]]);
    }
  }
  const sizes = placed.map(([label]) => [label.offsetWidth, label.offsetHeight]);
  const taken: { left: number; top: number; right: number; bottom: number }[] = [];
  placed.forEach(([label, to, [ux, uy]], k) => {
    const [w, h] = sizes[k];
    // Centred a little beyond the end, far enough along the direction to clear it; moved on
    // along it while it would cover a label placed before (an edge's and a corner's meet at an L's inside corner).
    let reach = 6 + Math.abs(ux) * w / 2 + Math.abs(uy) * h / 2;
    let box = { left: 0, top: 0, right: 0, bottom: 0 };
    for (let tries = 0; tries < 30; tries++, reach += 5) {
      const left = Math.round(to[0] + ux * reach - w / 2);
      const top = Math.round(to[1] + uy * reach - h / 2);
      box = { left, top, right: left + w, bottom: top + h };
      if (!taken.some((b) => box.left < b.right && b.left < box.right && box.top < b.bottom && b.top < box.bottom)) break;
    }
    taken.push(box);
    label.style.left = `${box.left}px`;
    label.style.top = `${box.top}px`;
  });
}
