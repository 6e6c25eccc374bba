import { formatConcentration } from './colour-scale.ts';
import { junctionSide, type Sample } from './sample.ts';

/**
 * The hover readout of a tile: the run, the position, every layer there (net doping first)
 * and the side of the junction. Each row carries its quantity or layer and the full-precision
 * value as data attributes.
 */
export function showReadout(el: HTMLElement, layers: string[], xUm: number, zUm: number, sample: Sample | null, run?: { runId: string; title: string }, place?: [string, number][]): void {
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
  // A section of a 3D run names the point in the run's own coordinates (x, y, z; s along a diagonal).
  for (const [name, um] of place ?? [['x', xUm], ['z', zUm]]) row(name, `${um.toFixed(4)} µm`, { quantity: name, um: String(um) });
  if (!sample) {
    row('', place ? 'outside the section' : 'outside the cross-section');
    return;
  }
  layers.forEach((name, k) => {
    row(name === 'net' ? 'net doping' : name, `${formatConcentration(sample.values[k])} cm⁻³`, { layer: name, value: String(sample.values[k]) });
  });
  row('side', junctionSide(sample.values[0]), { quantity: 'side' });
}
