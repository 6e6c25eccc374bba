import type GUI from 'lil-gui';
import type { Controller } from 'lil-gui';
import { zeroContours } from '@edgewise/solver2d';
import { colourAt } from './colormap.ts';
import type { ElectricalData } from './electrical-data.ts';
import type { RunData } from './load.ts';
import type { Stage } from './stage.ts';
import { formatTick, niceTicks } from './ticks.ts';
import type { Tile } from './tile.ts';
import type { TileView } from './tile-view.ts';

/**
 * The electrical rules drawn on the tiles: a tile coloured by the electrostatic potential (V)
 * or the field's magnitude (V/cm) of one window's region at one reverse bias, on a linear
 * scale shared by the tiles, and that region's depletion edge (where the majority carriers
 * recover to half the doping) as a line. The picture is rasterised once per choice on a
 * uniform grid of the tile (the electrostatic grid is not uniform) and drawn under the
 * junction contours and axes of the stage's 2D overlay.
 */

export type ElectricalQuantity = 'doping' | 'potential' | 'field';

export interface ElectricalState {
  colourBy: ElectricalQuantity;
  /** index into the runs' biases */
  bias: number;
  /** index of the window whose region is biased */
  window: number;
  edges: boolean;
}

const UNIT: Record<Exclude<ElectricalQuantity, 'doping'>, string> = { potential: 'V', field: 'V/cm' };
const TITLE: Record<Exclude<ElectricalQuantity, 'doping'>, string> = { potential: 'potential', field: '|field|' };
/** Raster of a tile's picture, pixels along its longer side. */
const RASTER_PX = 480;

interface Picture {
  key: string;
  canvas: HTMLCanvasElement;
  /** world extent the raster covers, µm */
  widthUm: number;
  depthUm: number;
}

/** Index of the last node at or before v (0 below the first). */
function below(axis: Float64Array, v: number): number {
  let lo = 0;
  let hi = axis.length - 1;
  if (v <= axis[0]) return 0;
  if (v >= axis[hi]) return hi;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (axis[mid] <= v) lo = mid;
    else hi = mid;
  }
  return lo;
}

export class ElectricalOverlay {
  readonly state: ElectricalState = { colourBy: 'doping', bias: 0, window: 0, edges: true };
  private readonly bias: Controller;
  private readonly window: Controller;
  private readonly pictures = new WeakMap<RunData, Picture>();
  private readonly edgeCache = new WeakMap<RunData, { key: string; lines: Float64Array[] }>();
  private range: [number, number] = [0, 1];

  private readonly colourMap: Uint8Array;
  /** the electrical data the options were offered for */
  private offeredFor: ElectricalData | undefined;

  /** Draws under each tile's contours on the stage; `changed` restyles the page. */
  constructor(readonly folder: GUI, stage: Stage, private readonly changed: () => void) {
    this.colourMap = stage.colourMapBytes;
    stage.underlay = (ctx, tile, view) => this.draw(ctx, tile, view);
    const s = this.state;
    folder.add(s, 'colourBy', { 'doping (as above)': 'doping', 'potential, V': 'potential', '|field|, V/cm': 'field' }).name('colour by').onChange(changed);
    this.bias = folder.add(s, 'bias', { '—': 0 }).name('reverse bias').onChange(changed);
    this.window = folder.add(s, 'window', { '1': 0 }).name('biased window').onChange(changed);
    folder.add(s, 'edges').name('depletion edge').onChange(changed);
    folder.hide();
  }

  /** After the tiles or the style changed: the options offered for the tiles' runs, and the colour bar when active. */
  restyle(tiles: readonly Tile[], bar: HTMLElement): void {
    const first = tiles.find((t) => t.run.electrical)?.run.electrical;
    if (first !== this.offeredFor) this.offer(first);
    if (!this.active) return;
    this.updateRange(tiles);
    this.drawBar(bar);
  }

  /** Offers the biases and windows of the first run with electrical data; hides the folder when there is none. */
  private offer(first: ElectricalData | undefined): void {
    this.offeredFor = first;
    if (!first) {
      this.state.colourBy = 'doping';
      this.folder.hide();
      return;
    }
    this.bias.options(Object.fromEntries(first.biasV.map((v, b) => [`${v} V`, b])));
    this.window.options(Object.fromEntries(Array.from({ length: first.windows }, (_, k) => [String(k + 1), k])));
    if (this.state.bias >= first.biasV.length) this.state.bias = 0;
    if (this.state.window >= first.windows) this.state.window = 0;
    for (const c of this.folder.controllers) c.updateDisplay();
    this.folder.show();
  }

  /** Whether the tiles are coloured by an electrical quantity (the colour bar is then this module's). */
  get active(): boolean {
    return this.state.colourBy !== 'doping';
  }

  /** Sets options from code (the tests), then the page redraws. */
  set(options: Partial<ElectricalState>): void {
    Object.assign(this.state, options);
    for (const c of this.folder.controllers) c.updateDisplay();
    this.changed();
  }

  /** Offset of the chosen window and bias in a run's arrays, or −1 where it lacks them. */
  private offset(e: ElectricalData): number {
    const { bias, window } = this.state;
    if (bias >= e.biasV.length || window >= e.windows) return -1;
    return (window * e.biasV.length + bias) * e.x.length * e.z.length;
  }

  private values(e: ElectricalData): Float64Array | null {
    const at = this.offset(e);
    if (at < 0 || !this.active) return null;
    const all = this.state.colourBy === 'potential' ? e.potentialV : e.fieldVPerCm;
    return all.subarray(at, at + e.x.length * e.z.length);
  }

  /** The linear range shared by the tiles: the chosen quantity's extremes over them. */
  updateRange(tiles: readonly Tile[]): [number, number] {
    let lo = Infinity;
    let hi = -Infinity;
    for (const t of tiles) {
      const v = t.run.electrical ? this.values(t.run.electrical) : null;
      if (!v) continue;
      for (let k = 0; k < v.length; k++) {
        if (v[k] < lo) lo = v[k];
        if (v[k] > hi) hi = v[k];
      }
    }
    if (!(hi > lo)) [lo, hi] = Number.isFinite(lo) ? [lo - 1, lo + 1] : [0, 1];
    if (this.state.colourBy === 'field') lo = 0;
    this.range = [lo, hi];
    return this.range;
  }

  /** Draws a tile's picture and its depletion edge into one of its views. */
  draw(ctx: CanvasRenderingContext2D, tile: Tile, view: TileView): void {
    const e = tile.run.electrical;
    if (!e) return;
    const picture = this.active ? this.picture(tile.run, e, tile.widthUm, tile.depthUm) : null;
    const edges = this.state.edges ? this.edges(tile.run, e) : [];
    if (!picture && edges.length === 0) return;
    ctx.save();
    ctx.beginPath();
    ctx.rect(view.left, view.top, view.width, view.height);
    ctx.clip();
    if (picture) {
      ctx.imageSmoothingEnabled = true;
      ctx.drawImage(picture.canvas, view.left - view.x0Um * view.pxPerUmX, view.top - view.z0Um * view.pxPerUmZ,
        picture.widthUm * view.pxPerUmX, picture.depthUm * view.pxPerUmZ);
    }
    if (edges.length > 0) drawEdges(ctx, view, edges);
    ctx.restore();
  }

  private picture(run: RunData, e: ElectricalData, widthUm: number, depthUm: number): Picture | null {
    const values = this.values(e);
    if (!values) return null;
    const key = `${this.state.colourBy}:${this.state.bias}:${this.state.window}:${this.range[0]}:${this.range[1]}`;
    const cached = this.pictures.get(run);
    if (cached?.key === key) return cached;
    const aspect = depthUm / widthUm;
    const w = aspect <= 1 ? RASTER_PX : Math.max(8, Math.round(RASTER_PX / aspect));
    const h = aspect <= 1 ? Math.max(8, Math.round(RASTER_PX * aspect)) : RASTER_PX;
    const canvas = cached?.canvas ?? document.createElement('canvas');
    canvas.width = w;
    canvas.height = h;
    const ctx = canvas.getContext('2d')!;
    const image = ctx.createImageData(w, h);
    rasterise(image.data, w, h, widthUm, depthUm, e, values, this.range, this.colourMap);
    ctx.putImageData(image, 0, 0);
    const picture = { key, canvas, widthUm, depthUm };
    this.pictures.set(run, picture);
    return picture;
  }

  private edges(run: RunData, e: ElectricalData): Float64Array[] {
    const at = this.offset(e);
    if (at < 0) return [];
    const key = `${this.state.bias}:${this.state.window}`;
    const cached = this.edgeCache.get(run);
    if (cached?.key === key) return cached.lines;
    const values = e.depletion.subarray(at, at + e.x.length * e.z.length);
    const lines = Number.isNaN(values[0]) ? [] : zeroContours({ xs: e.x, zs: e.z, values, nx: e.x.length, nz: e.z.length }).map((l) => Float64Array.from(l.flat()));
    this.edgeCache.set(run, { key, lines });
    return lines;
  }

  /** The colour bar for the electrical quantity: the map over the linear range, ticks at nice numbers, the unit in its title. */
  drawBar(container: HTMLElement): void {
    if (this.state.colourBy === 'doping') return;
    const [lo, hi] = this.range;
    container.replaceChildren();
    const title = document.createElement('div');
    title.className = 'bar-title';
    title.textContent = `${TITLE[this.state.colourBy]}, ${UNIT[this.state.colourBy]}`;
    const body = document.createElement('div');
    body.className = 'bar-body';
    const canvas = document.createElement('canvas');
    const height = 200;
    canvas.width = 16;
    canvas.height = height;
    const ctx = canvas.getContext('2d')!;
    for (let y = 0; y < height; y++) {
      ctx.fillStyle = colourAt(this.colourMap, 1 - y / (height - 1));
      ctx.fillRect(0, y, 16, 1);
    }
    const ticks = document.createElement('div');
    ticks.className = 'bar-ticks';
    const t = niceTicks(lo, hi, 5);
    for (const v of t.values) {
      const span = document.createElement('span');
      span.textContent = Math.abs(hi) >= 1e4 ? v.toExponential(1).replace('e+', 'e') : formatTick(v, t);
      span.style.top = `${((hi - v) / (hi - lo)) * 100}%`;
      ticks.append(span);
    }
    body.append(canvas, ticks);
    container.append(title, body);
  }
}

/** RGBA of the picture: each pixel's value bilinear between the grid's nodes, on the range, through the colour map. */
function rasterise(out: Uint8ClampedArray, w: number, h: number, widthUm: number, depthUm: number, e: ElectricalData,
  values: Float64Array, [lo, hi]: [number, number], map: Uint8Array): void {
  const nx = e.x.length;
  const span = hi - lo;
  const colours = map.length / 4;
  for (let py = 0; py < h; py++) {
    const z = ((py + 0.5) / h) * depthUm;
    const j = below(e.z, z);
    const j1 = Math.min(j + 1, e.z.length - 1);
    const tz = j1 > j ? Math.min(1, Math.max(0, (z - e.z[j]) / (e.z[j1] - e.z[j]))) : 0;
    for (let px = 0; px < w; px++) {
      const x = ((px + 0.5) / w) * widthUm;
      const i = below(e.x, x);
      const i1 = Math.min(i + 1, nx - 1);
      const tx = i1 > i ? Math.min(1, Math.max(0, (x - e.x[i]) / (e.x[i1] - e.x[i]))) : 0;
      const v = (1 - tz) * ((1 - tx) * values[j * nx + i] + tx * values[j * nx + i1]) + tz * ((1 - tx) * values[j1 * nx + i] + tx * values[j1 * nx + i1]);
      const o = 4 * (py * w + px);
      if (!Number.isFinite(v)) {
        out[o + 3] = 0;
        continue;
      }
      const c = Math.min(colours - 1, Math.max(0, Math.round(((v - lo) / span) * (colours - 1)))) * 4;
      out[o] = map[c];
      out[o + 1] = map[c + 1];
      out[o + 2] = map[c + 2];
      out[o + 3] = 255;
    }
  }
}

/** The depletion edges: a white dashed line over a dark one, so it shows on every colour and apart from the junction. */
function drawEdges(ctx: CanvasRenderingContext2D, v: TileView, lines: Float64Array[]): void {
  ctx.beginPath();
  for (const line of lines) {
    for (let k = 0; k < line.length; k += 2) {
      const x = v.left + (line[k] - v.x0Um) * v.pxPerUmX;
      const y = v.top + (line[k + 1] - v.z0Um) * v.pxPerUmZ;
      if (k === 0) ctx.moveTo(x, y);
      else ctx.lineTo(x, y);
    }
  }
  ctx.lineJoin = 'round';
  ctx.strokeStyle = '#101014';
  ctx.lineWidth = 3;
  ctx.setLineDash([]);
  ctx.stroke();
  ctx.strokeStyle = '#ffffff';
  ctx.lineWidth = 1.5;
  ctx.setLineDash([5, 4]);
  ctx.stroke();
  ctx.setLineDash([]);
}
