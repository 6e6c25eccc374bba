import { LIVE_ID } from './live-panel.ts';
import type { RunData } from './load.ts';
import type { Tile } from './tile.ts';
import { windowWidthUm } from './load.ts';

/**
 * A tile's caption: what was swept, then the first window's width, junction depth and
 * lateral encroachment (with the report's error bars where it has them), one per line so
 * they fit a small tile; the full text is the tooltip.
 */
function fmtUm(v: number | null | undefined, digits = 3): string {
  return typeof v === 'number' ? v.toFixed(digits) : '—';
}

function fmtValue(v: number | string): string {
  return typeof v === 'number' ? String(Number(v.toPrecision(6))) : v;
}

export function captionElement(run: RunData, live: boolean): HTMLElement {
  const w = run.report.windows[0];
  const div = document.createElement('div');
  div.className = 'caption';
  div.dataset.runId = run.id;
  const head = document.createElement('div');
  head.className = 'caption-head';
  const values = Object.entries(run.values).map(([k, v]) => `${k} ${fmtValue(v)}`).join(' · ');
  head.textContent = live ? 'live re-run' : values || run.report.title || run.id;
  const width = windowWidthUm(run.report);
  const part = (cls: string, label: string, value: string, um?: number | null) => {
    const s = document.createElement('span');
    s.className = cls;
    s.textContent = `${label} ${value}`;
    if (typeof um === 'number') s.dataset.um = String(um);
    const d = document.createElement('div');
    d.append(s);
    return d;
  };
  const errors = (w as { errors?: Record<string, number> } | undefined)?.errors ?? {};
  const pm = (key: string) => (typeof errors[key] === 'number' ? ` ± ${errors[key].toFixed(3)}` : '');
  const lateralErr = typeof errors.lateralLeftUm === 'number' ? ` (± ${Math.max(errors.lateralLeftUm, errors.lateralRightUm ?? 0).toFixed(3)})` : '';
  div.append(
    head,
    part('window', 'window', `${fmtUm(width, 2)} µm`, width),
    part('xj', 'xj', `${fmtUm(w?.junctionDepthUm)}${pm('junctionDepthUm')} µm`, w?.junctionDepthUm),
    part('lateral', 'lateral', `${fmtUm(w?.lateralLeftUm)} | ${fmtUm(w?.lateralRightUm)} µm`, w?.lateralLeftUm),
  );
  div.title = `${head.textContent}\nwindow ${fmtUm(width, 3)} µm\njunction depth ${fmtUm(w?.junctionDepthUm)}${pm('junctionDepthUm')} µm\n` +
    `lateral encroachment, left | right: ${fmtUm(w?.lateralLeftUm)} | ${fmtUm(w?.lateralRightUm)} µm${lateralErr}`;
  return div;
}

/** Captions under the drawn tiles, each at its tile's left edge. */
export function placeCaptions(container: HTMLElement, tiles: Tile[], stageHeight: number, cellWidth: number): void {
  container.replaceChildren();
  for (const t of tiles) {
    const v = t.view;
    if (!v) continue;
    const c = captionElement(t.run, t.run.id === LIVE_ID);
    c.style.left = `${v.left}px`;
    c.style.top = `${Math.min(stageHeight - 30, v.top + v.height + 17)}px`;
    c.style.maxWidth = `${Math.max(v.width, cellWidth - 50)}px`;
    container.append(c);
  }
}
