import type { RunData } from './load.ts';
import { windowWidthUm } from './load.ts';
import { formatTick, niceTicks } from './ticks.ts';

/**
 * Junction depth and lateral encroachment against window width for a sweep: the curve a
 * layout rule is read from (below about two diffusion lengths the junction gets shallower
 * as the window narrows).
 */
export interface PlotPoint {
  runId: string;
  widthUm: number;
  junctionDepthUm: number | null;
  lateralUm: number | null;
}

export function plotPoints(runs: RunData[]): PlotPoint[] {
  const out: PlotPoint[] = [];
  for (const run of runs) {
    const w = run.report.windows[0];
    const width = windowWidthUm(run.report);
    if (!w || width === null) continue;
    const lateral = [w.lateralLeftUm, w.lateralRightUm].filter((v): v is number => typeof v === 'number');
    out.push({
      runId: run.id,
      widthUm: width,
      junctionDepthUm: w.junctionDepthUm ?? null,
      lateralUm: lateral.length ? lateral.reduce((a, b) => a + b, 0) / lateral.length : null,
    });
  }
  return out.sort((a, b) => a.widthUm - b.widthUm);
}

const SVG = 'http://www.w3.org/2000/svg';

function el<K extends keyof SVGElementTagNameMap>(name: K, attrs: Record<string, string | number>, text?: string): SVGElementTagNameMap[K] {
  const e = document.createElementNS(SVG, name);
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, String(v));
  if (text !== undefined) e.textContent = text;
  return e;
}

const SERIES = [
  { key: 'junctionDepthUm', label: 'junction depth xj', colour: '#1b4f9c', dash: '' },
  { key: 'lateralUm', label: 'lateral encroachment (mean of edges)', colour: '#b3391f', dash: '5 3' },
] as const;

export function drawPlot(container: HTMLElement, points: PlotPoint[], width = 300, height = 210): void {
  container.replaceChildren();
  const usable = points.filter((p) => p.junctionDepthUm !== null || p.lateralUm !== null);
  const widths = new Set(usable.map((p) => p.widthUm));
  if (usable.length < 2 || widths.size < 2) {
    container.hidden = true;
    return;
  }
  container.hidden = false;
  const m = { left: 40, right: 10, top: 10, bottom: 58 };
  const svg = el('svg', { width, height, viewBox: `0 0 ${width} ${height}`, role: 'img', 'aria-label': 'junction depth and lateral encroachment against window width' });
  const xs = usable.map((p) => p.widthUm);
  const ys = usable.flatMap((p) => [p.junctionDepthUm, p.lateralUm]).filter((v): v is number => v !== null);
  const xt = niceTicks(Math.min(...xs), Math.max(...xs), 4);
  const yt = niceTicks(0, Math.max(...ys) * 1.05, 4);
  const x0 = Math.min(xt.values[0], ...xs), x1 = Math.max(xt.values[xt.values.length - 1], ...xs);
  const y1 = Math.max(yt.values[yt.values.length - 1], ...ys);
  const px = (x: number) => m.left + ((x - x0) / (x1 - x0 || 1)) * (width - m.left - m.right);
  const py = (y: number) => height - m.bottom - (y / (y1 || 1)) * (height - m.top - m.bottom);
  const axes = el('g', { stroke: '#555', fill: 'none' });
  axes.append(el('path', { d: `M${m.left},${m.top}V${height - m.bottom}H${width - m.right}` }));
  for (const x of xt.values) axes.append(el('path', { d: `M${px(x)},${height - m.bottom}v4` }));
  for (const y of yt.values) axes.append(el('path', { d: `M${m.left},${py(y)}h-4` }));
  svg.append(axes);
  const labels = el('g', { 'font-size': 10, fill: '#333' });
  for (const x of xt.values) labels.append(el('text', { x: px(x), y: height - m.bottom + 14, 'text-anchor': 'middle' }, formatTick(x, xt)));
  for (const y of yt.values) labels.append(el('text', { x: m.left - 6, y: py(y) + 3, 'text-anchor': 'end' }, formatTick(y, yt)));
  labels.append(el('text', { x: (m.left + width - m.right) / 2, y: height - m.bottom + 27, 'text-anchor': 'middle' }, 'window width, µm'));
  labels.append(el('text', { x: 10, y: (m.top + height - m.bottom) / 2, 'text-anchor': 'middle', transform: `rotate(-90 10 ${(m.top + height - m.bottom) / 2})` }, 'µm'));
  svg.append(labels);
  SERIES.forEach((s, k) => {
    const pts = usable.filter((p) => p[s.key] !== null);
    const g = el('g', { class: `series series-${s.key}`, stroke: s.colour, fill: s.colour });
    if (pts.length > 1) g.append(el('path', { d: pts.map((p, i) => `${i ? 'L' : 'M'}${px(p.widthUm)},${py(p[s.key]!)}`).join(''), fill: 'none', 'stroke-width': 1.5, 'stroke-dasharray': s.dash }));
    for (const p of pts) {
      const dot = el('circle', { cx: px(p.widthUm), cy: py(p[s.key]!), r: 2.6, 'data-run-id': p.runId, 'data-value-um': p[s.key]! });
      dot.append(el('title', {}, `${s.label}: ${p[s.key]!.toFixed(3)} µm at window ${p.widthUm} µm`));
      g.append(dot);
    }
    svg.append(g);
    const baseline = height - 18 + k * 13;
    svg.append(el('path', { d: `M${m.left},${baseline - 3}h18`, stroke: s.colour, 'stroke-width': 1.5, 'stroke-dasharray': s.dash }));
    svg.append(el('text', { x: m.left + 24, y: baseline, 'font-size': 10, fill: '#333' }, s.label));
  });
  container.append(svg);
}
