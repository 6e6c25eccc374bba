import type { Report } from '@edgewise/solver2d';
import { tickStep } from './svg.ts';

/**
 * plan.svg: a 3D run's plan view to scale (one µm the same length in x and y), y upwards as
 * on a layout: the mask (shaded), its rectangles (open), every junction's outline at the
 * surface, and the reach measured at each rectangle's edges and corners as short ticks.
 */

/** Longest side of the drawing, px. */
const PLOT_MAX_PX = 800;
const MARGIN = { left: 56, right: 24, top: 40, bottom: 40 };

function px(v: number): string {
  return Number(v.toFixed(2)).toString();
}

function escapeXml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&apos;' })[c]!);
}

/** Whether (x, y) lies inside one of the report's rectangles. */
function inWindow(report: Report, x: number, y: number): boolean {
  return (report.rectangles ?? []).some((r) => x > r.x0Um && x < r.x1Um && y > r.y0Um && y < r.y1Um);
}

/**
 * The direction the report measured a concave corner's reach along: into the one quadrant
 * around it that no rectangle fills (analyze3d.ts), not the rectangle's own outward diagonal.
 */
function emptyQuadrant(report: Report, x: number, y: number, scaleUm: number): [number, number] | null {
  const eps = 1e-6 * scaleUm;
  const d = Math.SQRT1_2;
  const quadrant = ([[1, 1], [-1, 1], [-1, -1], [1, -1]] as const).find(([sx, sy]) => !inWindow(report, x + eps * sx, y + eps * sy));
  return quadrant ? [quadrant[0] * d, quadrant[1] * d] : null;
}

export function planSvg(report: Report): string {
  const widthUm = report.crossSection.widthUm;
  const lengthUm = report.crossSection.lengthUm ?? widthUm;
  const scale = Math.min(PLOT_MAX_PX / widthUm, PLOT_MAX_PX / lengthUm);
  const w = widthUm * scale;
  const h = lengthUm * scale;
  const X = (x: number) => MARGIN.left + x * scale;
  const Y = (y: number) => MARGIN.top + (lengthUm - y) * scale;
  const width = MARGIN.left + w + MARGIN.right;
  const height = MARGIN.top + h + MARGIN.bottom;
  const out: string[] = [];
  out.push(`<svg xmlns="http://www.w3.org/2000/svg" width="${px(width)}" height="${px(height)}" viewBox="0 0 ${px(width)} ${px(height)}" font-family="sans-serif" font-size="11">`);
  out.push(`<title>${escapeXml(report.title ?? 'plan view')}: mask and junction outlines at the surface, to scale</title>`);
  out.push(`<rect x="${px(X(0))}" y="${px(Y(lengthUm))}" width="${px(w)}" height="${px(h)}" fill="#c9c4b8" stroke="#555" stroke-width="1"/>`);
  for (const r of report.rectangles ?? []) {
    out.push(`<rect x="${px(X(r.x0Um))}" y="${px(Y(r.y1Um))}" width="${px((r.x1Um - r.x0Um) * scale)}" height="${px((r.y1Um - r.y0Um) * scale)}" fill="#f4f1ea" stroke="none"/>`);
  }
  for (const outline of report.plan?.outlines ?? []) {
    for (const line of outline.polylinesUm) {
      out.push(`<polyline fill="none" stroke="#b2182b" stroke-width="1.5" points="${line.map(([x, y]) => `${px(X(x))},${px(Y(y))}`).join(' ')}"/>`);
    }
  }
  // The measured reach: a tick from each edge middle and corner to where the junction is.
  for (const r of report.rectangles ?? []) {
    const xm = 0.5 * (r.x0Um + r.x1Um);
    const ym = 0.5 * (r.y0Um + r.y1Um);
    const edges: [number | null, number, number, number, number][] = [
      [r.edgeReachUm.left, r.x0Um, ym, -1, 0], [r.edgeReachUm.right, r.x1Um, ym, 1, 0],
      [r.edgeReachUm.bottom, xm, r.y0Um, 0, -1], [r.edgeReachUm.top, xm, r.y1Um, 0, 1],
    ];
    const d = Math.SQRT1_2;
    const corners: [number | null, number, number, number, number][] = [
      [r.cornerReachUm.bottomLeft, r.x0Um, r.y0Um, -d, -d], [r.cornerReachUm.bottomRight, r.x1Um, r.y0Um, d, -d],
      [r.cornerReachUm.topLeft, r.x0Um, r.y1Um, -d, d], [r.cornerReachUm.topRight, r.x1Um, r.y1Um, d, d],
    ];
    for (const [k, name] of (['bottomLeft', 'bottomRight', 'topLeft', 'topRight'] as const).entries()) {
      const c = corners[k];
      const turned = r.cornerKind[name] === 'concave' ? emptyQuadrant(report, c[1], c[2], Math.max(widthUm, lengthUm)) : null;
      if (turned) [c[3], c[4]] = turned;
    }
    for (const [reach, x, y, ux, uy] of [...edges, ...corners]) {
      if (reach === null) continue;
      out.push(`<line x1="${px(X(x))}" y1="${px(Y(y))}" x2="${px(X(x + ux * reach))}" y2="${px(Y(y + uy * reach))}" stroke="#2166ac" stroke-width="1"/>`);
    }
  }
  const step = tickStep(Math.max(widthUm, lengthUm), 8);
  for (let v = 0; v <= widthUm * (1 + 1e-9); v += step) {
    out.push(`<text x="${px(X(v))}" y="${px(Y(0) + 16)}" text-anchor="middle">${Number(v.toPrecision(6))}</text>`);
  }
  for (let v = 0; v <= lengthUm * (1 + 1e-9); v += step) {
    out.push(`<text x="${px(X(0) - 6)}" y="${px(Y(v) + 4)}" text-anchor="end">${Number(v.toPrecision(6))}</text>`);
  }
  out.push(`<text x="${px(X(widthUm / 2))}" y="${px(height - 6)}" text-anchor="middle">x µm</text>`);
  out.push(`<text x="14" y="${px(Y(lengthUm / 2))}" text-anchor="middle" transform="rotate(-90 14 ${px(Y(lengthUm / 2))})">y µm</text>`);
  out.push('</svg>');
  return `${out.join('\n')}\n`;
}
