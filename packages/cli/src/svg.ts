import { maskedStretches, type Report } from '@edgewise/solver2d';

/**
 * contour.svg: the cross-section drawn to scale (one µm is the same length across and down),
 * with the mask on the surface, the junction contours, the lateral encroachment at each mask
 * edge (and the lateral reach at its depth, where the junction reaches further below the
 * surface), the gaps across stripes, and µm axes. Depth runs downwards.
 */

/** Longest side of the drawing of the cross-section, px. */
const PLOT_MAX_PX = 900;
/** Shortest the depth is drawn, px, so that a shallow cross-section keeps readable ticks. */
const PLOT_MIN_DEPTH_PX = 60;
const MARGIN = { left: 64, right: 24, top: 64, bottom: 40 };
const MASK_PX = 7;

function escapeXml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&apos;' })[c]!);
}

/** Tick step of 1, 2 or 5 × 10^k giving at most `most` intervals over `span`. */
export function tickStep(span: number, most: number): number {
  const raw = span / most;
  const decade = 10 ** Math.floor(Math.log10(raw));
  for (const m of [1, 2, 5, 10]) if (m * decade >= raw) return m * decade;
  return 10 * decade;
}

function ticks(span: number, most: number): number[] {
  const step = tickStep(span, most);
  const out: number[] = [];
  for (let k = 0; k * step <= span * (1 + 1e-9); k++) out.push(Number((k * step).toPrecision(12)));
  return out;
}

function px(v: number): string {
  return Number(v.toFixed(2)).toString();
}

export function contourSvg(report: Report): string {
  const { widthUm, depthUm } = report.crossSection;
  // To scale, within PLOT_MAX_PX; a shallow section is enlarged to PLOT_MIN_DEPTH_PX deep unless
  // that would make it more than four times as wide.
  const fit = Math.min(PLOT_MAX_PX / widthUm, PLOT_MAX_PX / depthUm);
  const scale = Math.min(Math.max(fit, PLOT_MIN_DEPTH_PX / depthUm), (4 * PLOT_MAX_PX) / widthUm);
  const w = widthUm * scale;
  const h = depthUm * scale;
  const width = MARGIN.left + w + MARGIN.right;
  const height = MARGIN.top + h + MARGIN.bottom;
  const X = (x: number) => MARGIN.left + x * scale;
  const Z = (z: number) => MARGIN.top + z * scale;
  const out: string[] = [];
  out.push(`<svg xmlns="http://www.w3.org/2000/svg" width="${px(width)}" height="${px(height)}" viewBox="0 0 ${px(width)} ${px(height)}" font-family="sans-serif" font-size="11">`);
  out.push(`<title>${escapeXml(report.title ?? 'cross-section')}: junction contours, to scale</title>`);
  out.push(`<rect x="${px(X(0))}" y="${px(Z(0))}" width="${px(w)}" height="${px(h)}" fill="#f4f1ea" stroke="#555" stroke-width="1"/>`);

  // The mask: everything on the surface that is not a window.
  for (const [a, b] of maskedStretches(report.windows.map((w) => [w.x0Um, w.x1Um] as const), widthUm)) {
    out.push(`<rect class="mask" x="${px(X(a))}" y="${px(Z(0) - MASK_PX)}" width="${px((b - a) * scale)}" height="${MASK_PX}" fill="#3b3b3b"/>`);
  }
  report.windows.forEach((win, k) => {
    const label = win.junctionDepthUm === null ? `window ${k + 1}` : `window ${k + 1}: xj ${win.junctionDepthUm.toFixed(3)} µm`;
    out.push(`<text x="${px(X(0.5 * (win.x0Um + win.x1Um)))}" y="${px(Z(0) - MASK_PX - 6)}" text-anchor="middle">${escapeXml(label)}</text>`);
  });

  for (const junction of report.junctions) {
    for (const line of junction.polylinesUm) {
      if (line.length < 2) continue;
      const points = line.map(([x, z]) => `${px(X(x))},${px(Z(z))}`).join(' ');
      out.push(`<polyline class="junction" points="${points}" fill="none" stroke="#c0392b" stroke-width="1.5" stroke-linejoin="round"/>`);
    }
  }

  // At each mask edge, the lateral encroachment as a dimension just below the surface, and the
  // lateral reach at its depth where the junction reaches further there (an implant's bulge).
  const dimension = (kind: 'lateral' | 'reach', edge: number, to: number, z: number, label: string, below: boolean) => {
    const a = X(edge);
    const b = X(to);
    const y = Z(z) + (below ? 4 : 0);
    out.push(`<line class="${kind}" x1="${px(a)}" y1="${px(y)}" x2="${px(b)}" y2="${px(y)}" stroke="#6b3fa0" stroke-width="1"/>`);
    for (const x of [a, b]) out.push(`<line class="${kind}-tick" x1="${px(x)}" y1="${px(y - 3)}" x2="${px(x)}" y2="${px(y + 3)}" stroke="#6b3fa0" stroke-width="1"/>`);
    out.push(`<text class="${kind}-label" x="${px(0.5 * (a + b))}" y="${px(y - 5)}" text-anchor="middle" font-size="9" fill="#6b3fa0" stroke="#f4f1ea" stroke-width="3" paint-order="stroke">${escapeXml(label)}</text>`);
  };
  for (const win of report.windows) {
    for (const [edge, dir, lateral, reach, depth] of [
      [win.x0Um, -1, win.lateralLeftUm, win.lateralReachLeftUm, win.lateralReachDepthLeftUm],
      [win.x1Um, 1, win.lateralRightUm, win.lateralReachRightUm, win.lateralReachDepthRightUm],
    ] as const) {
      if (lateral !== null) dimension('lateral', edge, edge + dir * lateral, 0, `lateral ${lateral.toFixed(3)} µm`, true);
      if (reach !== null && depth !== null && (lateral === null || depth > 0)) {
        dimension('reach', edge, edge + dir * reach, depth, `reach ${reach.toFixed(3)} µm at ${depth.toFixed(3)} µm`, false);
      }
    }
  }

  // Junction-to-junction gap across each stripe, as a dimension line just below the surface.
  for (const pair of report.spacings ?? []) {
    const left = report.windows[pair.left];
    const right = report.windows[pair.right];
    if (pair.merged || !pair.surfaceGapUm || left.lateralRightUm === null || right.lateralLeftUm === null) continue;
    const a = X(left.x1Um + left.lateralRightUm);
    const b = X(right.x0Um - right.lateralLeftUm);
    const y = Z(0) + 16;
    out.push(`<line class="gap" x1="${px(a)}" y1="${px(y)}" x2="${px(b)}" y2="${px(y)}" stroke="#1f5fa8" stroke-width="1"/>`);
    for (const x of [a, b]) out.push(`<line x1="${px(x)}" y1="${px(y - 4)}" x2="${px(x)}" y2="${px(y + 4)}" stroke="#1f5fa8" stroke-width="1"/>`);
    out.push(`<text x="${px(0.5 * (a + b))}" y="${px(y + 14)}" text-anchor="middle" fill="#1f5fa8" stroke="#f4f1ea" stroke-width="3" paint-order="stroke">${pair.surfaceGapUm.toFixed(3)} µm</text>`);
  }

  // Axes: x along the surface (top), depth down the left side, both in µm.
  const tick = 5;
  for (const x of ticks(widthUm, Math.max(2, Math.floor(w / 80)))) {
    out.push(`<line x1="${px(X(x))}" y1="${px(Z(depthUm))}" x2="${px(X(x))}" y2="${px(Z(depthUm) + tick)}" stroke="#555"/>`);
    out.push(`<text x="${px(X(x))}" y="${px(Z(depthUm) + tick + 11)}" text-anchor="middle">${x}</text>`);
  }
  for (const z of ticks(depthUm, Math.max(2, Math.floor(h / 30)))) {
    out.push(`<line x1="${px(X(0) - tick)}" y1="${px(Z(z))}" x2="${px(X(0))}" y2="${px(Z(z))}" stroke="#555"/>`);
    out.push(`<text x="${px(X(0) - tick - 3)}" y="${px(Z(z) + 4)}" text-anchor="end">${z}</text>`);
  }
  out.push(`<text x="${px(X(widthUm / 2))}" y="${px(height - 6)}" text-anchor="middle">x (µm)</text>`);
  out.push(`<text transform="translate(14 ${px(Z(depthUm / 2))}) rotate(-90)" text-anchor="middle">depth z (µm)</text>`);
  const heading = `${report.title ? `${report.title} — ` : ''}junction (N_D = N_A) in red, mask in black, lateral encroachment and reach below the surface in purple, junction gaps in blue; to scale`;
  out.push(`<text x="${px(MARGIN.left)}" y="16" font-size="12">${escapeXml(heading)}</text>`);
  out.push('</svg>');
  return `${out.join('\n')}\n`;
}
