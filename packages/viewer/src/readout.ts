import { formatConcentration } from './colour-scale.ts';
import { junctionSide, type Sample } from './sample.ts';

/**
 * The hover readout of a tile: the run, the position, every layer there (net doping first)
 * and the side of the junction. Each row carries its quantity or layer and the full-precision
 * value as data attributes.
 */
export function showReadout(el: HTMLElement, layers: string[], xUm: number, zUm: number, sample: Sample | null, run?: { runId: string; title: string }): void {
  el.hidden = false;
  el.replaceChildren();
  if (run) {
    el.dataset.runId = run.runId;
    const head = document.createElement('div');
    head.className = 'readout-head';
    head.textContent = run.title;
    el.append(head);
  }
  const row = (label: string, value: string, data?: Record<string, string>) => {
    const d = document.createElement('div');
    const l = document.createElement('span');
    l.textContent = label;
    const v = document.createElement('b');
    v.textContent = value;
    d.append(l, v);
    if (data) Object.assign(d.dataset, data);
    el.append(d);
  };
  el.dataset.xUm = String(xUm);
  el.dataset.zUm = String(zUm);
  row('x', `${xUm.toFixed(4)} µm`, { quantity: 'x' });
  row('z', `${zUm.toFixed(4)} µm`, { quantity: 'z' });
  if (!sample) {
    row('', 'outside the cross-section');
    return;
  }
  layers.forEach((name, k) => {
    row(name === 'net' ? 'net doping' : name, `${formatConcentration(sample.values[k])} cm⁻³`, { layer: name, value: String(sample.values[k]) });
  });
  row('side', junctionSide(sample.values[0]), { quantity: 'side' });
}
