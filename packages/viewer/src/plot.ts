import type { RunData } from './load.ts';
import { windowWidthUm } from './load.ts';
import { formatTick, niceTicks } from './ticks.ts';

/**
 * Junction depth and lateral reach against window width for a sweep: the curve a layout rule
 * is read from (below about two diffusion lengths the junction gets shallower as the window
 * narrows). The reach is the junction's widest extent beyond the mask edge at any depth
 * (`lateralReachLeftUm`/`…RightUm`), the wider of the two edges, which is what a spacing rule
 * must clear; reports written before the reach existed give the surface lateral instead.
 * Each value carries its error bar (`errors`) where the run has one.
 */
export interface PlotPoint {
  runId: string;
  widthUm: number;
  junctionDepthUm: number | null;
  junctionDepthErrorUm: number | null;
  lateralUm: number | null;
  lateralErrorUm: number | null;
  /** the depth of the reach, µm (null for the surface lateral) */
  lateralDepthUm: number | null;
  /** true: lateralUm is the reach at any depth; false: the surface lateral */
  reach: boolean;
}

type WindowFields = RunData['report']['windows'][number] & {
  lateralReachLeftUm?: number | null; lateralReachRightUm?: number | null;
  lateralReachDepthLeftUm?: number | null; lateralReachDepthRightUm?: number | null;
  errors?: Record<string, number | null | undefined> | null;
};

const num = (v: unknown): number | null => (typeof v === 'number' && Number.isFinite(v) ? v : null);

/** The wider edge's reach (else surface lateral), with its error bar and depth. */
function widerEdge(w: WindowFields): Pick<PlotPoint, 'lateralUm' | 'lateralErrorUm' | 'lateralDepthUm' | 'reach'> {
  const reach = num(w.lateralReachLeftUm) !== null || num(w.lateralReachRightUm) !== null;
  const edges = reach
    ? [['lateralReachLeftUm', 'lateralReachDepthLeftUm'], ['lateralReachRightUm', 'lateralReachDepthRightUm']] as const
    : [['lateralLeftUm', null], ['lateralRightUm', null]] as const;
  let best: Pick<PlotPoint, 'lateralUm' | 'lateralErrorUm' | 'lateralDepthUm'> = { lateralUm: null, lateralErrorUm: null, lateralDepthUm: null };
  for (const [key, depthKey] of edges) {
    const v = num(w[key]);
    if (v === null || (best.lateralUm !== null && v <= best.lateralUm)) continue;
    best = { lateralUm: v, lateralErrorUm: num(w.errors?.[key]), lateralDepthUm: depthKey ? num(w[depthKey]) : null };
  }
  return { ...best, reach };
}

export function plotPoints(runs: RunData[]): PlotPoint[] {
  const out: PlotPoint[] = [];
  for (const run of runs) {
    const w = run.report.windows[0] as WindowFields | undefined;
    const width = windowWidthUm(run.report);
    if (!w || width === null) continue;
    out.push({
      runId: run.id,
      widthUm: width,
      junctionDepthUm: num(w.junctionDepthUm),
      junctionDepthErrorUm: num(w.errors?.junctionDepthUm),
      ...widerEdge(w),
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
  { key: 'junctionDepthUm', error: 'junctionDepthErrorUm', colour: '#1b4f9c', dash: '' },
  { key: 'lateralUm', error: 'lateralErrorUm', colour: '#b3391f', dash: '5 3' },
] as const;

function seriesLabel(key: (typeof SERIES)[number]['key'], reach: boolean): string {
  if (key === 'junctionDepthUm') return 'junction depth xj';
  return reach ? 'lateral reach, any depth (wider edge)' : 'lateral encroachment at the surface (wider edge)';
}

export function drawPlot(container: HTMLElement, points: PlotPoint[], width = 300, height = 210): void {
  container.replaceChildren();
  const usable = points.filter((p) => p.junctionDepthUm !== null || p.lateralUm !== null);
  const widths = new Set(usable.map((p) => p.widthUm));
  if (usable.length < 2 || widths.size < 2) {
    container.hidden = true;
    return;
  }
  container.hidden = false;
  // The reach where every run has it; a sweep with older reports plots the surface lateral.
  const reach = usable.every((p) => p.lateralUm === null || p.reach);
  const m = { left: 40, right: 10, top: 10, bottom: 58 };
  const svg = el('svg', { width, height, viewBox: `0 0 ${width} ${height}`, role: 'img', 'aria-label': `junction depth and ${reach ? 'lateral reach' : 'lateral encroachment'} against window width` });
  const xs = usable.map((p) => p.widthUm);
  // The axis holds every value with its error bar.
  const ys = usable.flatMap((p) => [
    p.junctionDepthUm === null ? null : p.junctionDepthUm + (p.junctionDepthErrorUm ?? 0),
    p.lateralUm === null ? null : p.lateralUm + (p.lateralErrorUm ?? 0),
  ]).filter((v): v is number => v !== null);
  const xt = niceTicks(Math.min(...xs), Math.max(...xs), 4);
  const yt = niceTicks(0, Math.max(...ys) * 1.05, 4);
  const x0 = Math.min(xt.values[0], ...xs), x1 = Math.max(xt.values[xt.values.length - 1], ...xs);
  const y1 = Math.max(yt.values[yt.values.length - 1], ...ys);
  const px = (x: number) => m.left + ((x - x0) / (x1 - x0 || 1)) * (width - m.left - m.right);
  const py = (y: number) => height - m.bottom - (Math.max(0, y) / (y1 || 1)) * (height - m.top - m.bottom);
  const axes = el('g', { stroke: '#555', fill: 'none' });
  axes.append(el('path', { d: `M${m.left},${m.top}V${height - m.bottom}H${width - m.right}` }));
  for (const x of xt.values) axes.append(el('path', { d: `M${px(x)},${height - m.bottom}v4` }));
  for (const y of yt.values) axes.append(el('path', { d: `M${m.left},${py(y)}h-4` }));
  svg.append(axes);
  const labels = el('g', { 'font-size': 10, fill: '#333' });
  for (const x of xt.values) labels.append(el('text', { x: px(x), y: height - m.bottom + 14, 'text-anchor': 'middle' }, formatTick(x, xt)));
  for (const y of yt.values) labels.append(el('text', { x: m.left - 6, y: py(y) + 3, 'text-anchor': 'end' }, formatTick(y, yt)));
  labels.append(el('text', { class: 'x-label', x: (m.left + width - m.right) / 2, y: height - m.bottom + 27, 'text-anchor': 'middle' }, 'window width, µm'));
  const mid = (m.top + height - m.bottom) / 2;
  labels.append(el('text', { class: 'y-label', x: 10, y: mid, 'text-anchor': 'middle', transform: `rotate(-90 10 ${mid})` }, `xj, ${reach ? 'lateral reach' : 'surface lateral'}, µm`));
  svg.append(labels);
  SERIES.forEach((s, k) => {
    const label = seriesLabel(s.key, reach);
    const pts = usable.filter((p) => p[s.key] !== null);
    const g = el('g', { class: `series series-${s.key}`, stroke: s.colour, fill: s.colour });
    if (pts.length > 1) g.append(el('path', { d: pts.map((p, i) => `${i ? 'L' : 'M'}${px(p.widthUm)},${py(p[s.key]!)}`).join(''), fill: 'none', 'stroke-width': 1.5, 'stroke-dasharray': s.dash }));
    for (const p of pts) {
      const v = p[s.key]!;
      const e = p[s.error];
      // The error bar: value ± e, with caps (drawn where a run has one and it spans a pixel).
      if (e !== null && e > 0) {
        const x = px(p.widthUm);
        const bar = el('path', { class: 'error-bar', d: `M${x},${py(v - e)}V${py(v + e)}M${x - 3},${py(v - e)}h6M${x - 3},${py(v + e)}h6`, 'stroke-width': 1, fill: 'none', 'data-run-id': p.runId, 'data-error-um': e });
        g.append(bar);
      }
      const dot = el('circle', { cx: px(p.widthUm), cy: py(v), r: 2.6, 'data-run-id': p.runId, 'data-value-um': v });
      const depth = s.key === 'lateralUm' && p.lateralDepthUm !== null ? ` at ${p.lateralDepthUm.toFixed(3)} µm deep` : '';
      dot.append(el('title', {}, `${label}: ${v.toFixed(3)}${e !== null ? ` ± ${e.toFixed(3)}` : ''} µm${depth}, window ${p.widthUm} µm`));
      g.append(dot);
    }
    svg.append(g);
    const baseline = height - 18 + k * 13;
    svg.append(el('path', { d: `M${m.left},${baseline - 3}h18`, stroke: s.colour, 'stroke-width': 1.5, 'stroke-dasharray': s.dash }));
    svg.append(el('text', { class: `legend legend-${s.key}`, x: m.left + 24, y: baseline, 'font-size': 10, fill: '#333' }, label));
  });
  container.append(svg);
}
