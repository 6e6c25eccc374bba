import { colourAt } from './colormap.ts';
import { decadeLabel, decadeTicks, type ColourRange } from './colour-scale.ts';

/** The colour bar: the map drawn over the range, with a label at each decade, in cm^-3. */
export function drawColourBar(container: HTMLElement, rgba: Uint8Array, range: ColourRange, quantity: string): void {
  container.replaceChildren();
  const title = document.createElement('div');
  title.className = 'bar-title';
  title.textContent = `${quantity}, cm⁻³`;
  const body = document.createElement('div');
  body.className = 'bar-body';
  const canvas = document.createElement('canvas');
  const height = 200;
  canvas.width = 16;
  canvas.height = height;
  const ctx = canvas.getContext('2d')!;
  for (let y = 0; y < height; y++) {
    ctx.fillStyle = colourAt(rgba, 1 - y / (height - 1));
    ctx.fillRect(0, y, 16, 1);
  }
  const ticks = document.createElement('div');
  ticks.className = 'bar-ticks';
  for (const e of decadeTicks(range)) {
    const t = document.createElement('span');
    t.textContent = decadeLabel(e);
    t.style.top = `${((range.hi - e) / (range.hi - range.lo)) * 100}%`;
    t.dataset.exponent = String(e);
    ticks.append(t);
  }
  body.append(canvas, ticks);
  container.append(title, body);
}
