import type { Report } from '@edgewise/solver2d';
import { LIVE_ID } from './live-panel.ts';
import type { RunData } from './load.ts';
import type { Tile } from './tile.ts';

/**
 * A tile's caption: what was swept, in words and units ("window width 0.5 µm"), then for
 * every window its width, junction depth and lateral reach at each edge, with the report's
 * error bars where it has them; the full text is the tooltip.
 */
function fmtUm(v: number | null | undefined, digits = 3): string {
  return typeof v === 'number' ? v.toFixed(digits) : '—';
}

function fmtValue(v: number | string): string {
  if (typeof v !== 'number') return v;
  if (v !== 0 && (Math.abs(v) >= 1e5 || Math.abs(v) < 1e-3)) return Number(v.toPrecision(6)).toExponential().replace('e+', 'e');
  return String(Number(v.toPrecision(6)));
}

/** A unit from the ending of a recipe or report key (the project's naming rule). */
const UNITS: [RegExp, string][] = [
  [/Um$/, 'µm'], [/Cm3$/, 'cm⁻³'], [/Cm2$/, 'cm⁻²'], [/C$/, '°C'], [/^minutes$/, 'min'], [/V$/, 'V'], [/Ev$/, 'eV'],
];
const WORDS: Record<string, string> = { minutes: 'time', windowWidthUm: 'window width', temperatureC: 'temperature', surfaceConcentrationCm3: 'surface concentration' };

/** camelCase key without its unit, in words: surfaceConcentrationCm3 → surface concentration. */
function words(key: string): string {
  if (WORDS[key]) return WORDS[key];
  let bare = key;
  for (const [re] of UNITS) bare = bare.replace(re, '');
  return (bare || key).replace(/([a-z0-9])([A-Z])/g, '$1 $2').toLowerCase();
}

/**
 * A swept parameter and its value in words: `windowWidthUm` 0.5 → "window width 0.5 µm",
 * `steps[1].minutes` 60 → "step 2 (drive-in) time 60 min" (the step's kind from the report).
 */
export function parameterText(name: string, value: number | string, report?: Report): string {
  const keys = name.split('.');
  const last = keys[keys.length - 1];
  const unit = UNITS.find(([re]) => re.test(last))?.[1];
  const step = /^steps\[(\d+)\]$/.exec(keys[0]);
  let prefix = '';
  if (step) {
    const k = Number(step[1]);
    const kind = report?.steps?.[k]?.kind;
    prefix = `step ${k + 1}${kind ? ` (${kind})` : ''} `;
  } else if (keys.length > 1) {
    prefix = `${keys.slice(0, -1).map((p) => words(p.replace(/\[\d+\]$/, ''))).join(' ')} `;
  }
  return `${prefix}${words(last)} ${fmtValue(value)}${unit ? ` ${unit}` : ''}`;
}

type ReachFields = { lateralReachLeftUm?: number | null; lateralReachRightUm?: number | null };

function line(cls: string, text: string, um?: number | null): HTMLElement {
  const s = document.createElement('span');
  s.className = cls;
  s.textContent = text;
  if (typeof um === 'number') s.dataset.um = String(um);
  return s;
}

/** The larger error bar of the two edges' reach (or surface lateral), as " (± e)". */
function reachError(errors: Record<string, number>, reach: boolean): string {
  const keys = reach ? ['lateralReachLeftUm', 'lateralReachRightUm'] : ['lateralLeftUm', 'lateralRightUm'];
  const bars = keys.map((k) => errors[k]).filter((v): v is number => typeof v === 'number');
  if (bars.length === 0) return '';
  const e = Math.max(...bars);
  return ` (± ${e >= 0.001 || e === 0 ? e.toFixed(3) : e.toPrecision(1)})`;
}

/** One window's lines: width, junction depth, the reach at each edge (else the surface lateral). */
function windowRows(report: Report, k: number, several: boolean, widthInHead: boolean): { rows: HTMLElement[]; tip: string } {
  const w = report.windows[k] as Report['windows'][number] & ReachFields;
  const errors = (w as { errors?: Record<string, number> }).errors ?? {};
  // An error bar under a thousandth keeps one significant figure rather than showing ± 0.000.
  const pm = (key: string) => (typeof errors[key] === 'number' ? ` ± ${errors[key] >= 0.001 || errors[key] === 0 ? errors[key].toFixed(3) : errors[key].toPrecision(1)}` : '');
  const width = w.x1Um - w.x0Um;
  const reach = typeof w.lateralReachLeftUm === 'number' || typeof w.lateralReachRightUm === 'number';
  const left = reach ? w.lateralReachLeftUm : w.lateralLeftUm;
  const right = reach ? w.lateralReachRightUm : w.lateralRightUm;
  const name = reach ? 'lateral reach' : 'lateral';
  const label = several ? `window ${k + 1} width` : 'window width';
  const rows = [
    ...(widthInHead ? [] : [line('window', `${label} ${fmtUm(width, 2)} µm`, width)]),
    line('xj', `xj ${fmtUm(w.junctionDepthUm)}${pm('junctionDepthUm')} µm`, w.junctionDepthUm),
    line('lateral', `${name} ${fmtUm(left)} | ${fmtUm(right)}${reachError(errors, reach)} µm`, left),
  ];
  const tip = `${label} ${fmtUm(width, 3)} µm (${fmtUm(w.x0Um)}–${fmtUm(w.x1Um)} µm)\njunction depth ${fmtUm(w.junctionDepthUm)}${pm('junctionDepthUm')} µm\n` +
    `${reach ? 'lateral reach at any depth' : 'lateral encroachment at the surface'}, left | right: ${fmtUm(left)} | ${fmtUm(right)} µm` +
    (reach ? `\nlateral at the surface, left | right: ${fmtUm(w.lateralLeftUm)} | ${fmtUm(w.lateralRightUm)} µm` : '');
  return { rows, tip };
}

/** Caption lines a report needs at most: the head and three per window. */
export function captionLines(report: Report): number {
  return 1 + 3 * Math.max(1, report.windows.length);
}

/** The run in words: what was swept and its values, else the recipe's title, else its id. */
export function runTitle(run: RunData): string {
  // A live 3D run's sections are "live/plan", "live/cut-x" …
  if (run.id === LIVE_ID || run.id.startsWith(`${LIVE_ID}/`)) return 'live re-run';
  const values = Object.entries(run.values).map(([k, v]) => parameterText(k, v, run.report)).join(' · ');
  return values || run.report.title || run.id;
}

export function captionElement(run: RunData): HTMLElement {
  const div = document.createElement('div');
  div.className = 'caption';
  div.dataset.runId = run.id;
  const head = document.createElement('div');
  head.className = 'caption-head';
  head.textContent = runTitle(run);
  div.append(head);
  const tips = [head.textContent];
  if (run.section) {
    // A section of a 3D run: which cut it is, then the report's numbers it shows.
    const cut = document.createElement('div');
    cut.className = 'caption-cut';
    cut.textContent = run.section.title;
    div.append(cut);
    for (const text of run.section.lines) {
      const d = document.createElement('div');
      d.className = 'caption-section';
      d.textContent = text;
      div.append(d);
    }
    div.title = [...tips, run.section.title, ...run.section.lines].join('\n');
    return div;
  }
  const several = run.report.windows.length > 1;
  run.report.windows.forEach((_, k) => {
    const { rows, tip } = windowRows(run.report, k, several, !several && typeof run.values.windowWidthUm === 'number');
    const block = document.createElement('div');
    block.className = 'caption-window';
    block.dataset.window = String(k);
    for (const r of rows) {
      const d = document.createElement('div');
      d.append(r);
      block.append(d);
    }
    div.append(block);
    tips.push(tip);
  });
  div.title = tips.join('\n\n');
  return div;
}

/** Captions under the drawn tiles, each at its tile's left edge and as wide as its cell allows. */
export function placeCaptions(container: HTMLElement, tiles: Tile[], stageHeight: number, cellWidth: number): void {
  container.replaceChildren();
  for (const t of tiles) {
    const first = t.views[0];
    const last = t.views[t.views.length - 1];
    if (!first) continue;
    const c = captionElement(t.run);
    c.style.left = `${first.left}px`;
    c.style.top = `${Math.min(stageHeight - 30, first.top + first.height + 32)}px`;
    c.style.maxWidth = `${Math.max(last.left + last.width - first.left, cellWidth - 70)}px`;
    container.append(c);
  }
}
