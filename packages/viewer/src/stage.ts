import * as THREE from 'three';
import { colourMapRgba } from './colormap.ts';
import { niceTicks, formatTick } from './ticks.ts';
import type { Tile } from './tile.ts';
import type { TileView } from './tile-view.ts';
import { drawDimension, viewShowsEdge } from './dimensions.ts';
import type { SectionInfo } from './cuts3d.ts';
import { drawPlanMarks } from './plan-marks.ts';

const BACKGROUND = 0xf6f6f4;

/**
 * One WebGL renderer for every tile: each tile is drawn into its own rectangle of the one
 * canvas with viewport and scissor. A 2D canvas over it carries what is lines and text:
 * the junction contours and the axes (ticks and µm labels). Software WebGL draws wide
 * lines slowly; the 2D canvas draws them antialiased in a few milliseconds.
 */
export class Stage {
  readonly canvas: HTMLCanvasElement;
  readonly overlay: HTMLCanvasElement;
  readonly renderer: THREE.WebGLRenderer;
  readonly colourMapBytes = colourMapRgba(256);
  readonly colourMap: THREE.DataTexture;
  private readonly ctx: CanvasRenderingContext2D;
  width = 1;
  height = 1;
  frames = 0;
  /** drawn into each view of each tile before its contours and axes (the electrical overlay) */
  underlay: ((ctx: CanvasRenderingContext2D, tile: Tile, view: TileView) => void) | null = null;

  constructor(readonly container: HTMLElement) {
    this.canvas = document.createElement('canvas');
    this.canvas.className = 'stage-gl';
    this.overlay = document.createElement('canvas');
    this.overlay.className = 'stage-overlay';
    // Under the captions, readout and messages the page put in the view.
    container.prepend(this.canvas, this.overlay);
    this.renderer = new THREE.WebGLRenderer({ canvas: this.canvas, antialias: false, preserveDrawingBuffer: true });
    this.renderer.autoClear = false;
    this.renderer.setPixelRatio(Math.min(2, window.devicePixelRatio || 1));
    this.colourMap = new THREE.DataTexture(this.colourMapBytes, 256, 1, THREE.RGBAFormat);
    this.colourMap.magFilter = THREE.LinearFilter;
    this.colourMap.minFilter = THREE.LinearFilter;
    this.colourMap.wrapS = THREE.ClampToEdgeWrapping;
    this.colourMap.needsUpdate = true;
    this.ctx = this.overlay.getContext('2d')!;
    this.resize();
  }

  /** Matches the canvases to the container; returns whether the size changed. */
  resize(): boolean {
    const w = Math.max(1, Math.floor(this.container.clientWidth));
    const h = Math.max(1, Math.floor(this.container.clientHeight));
    if (w === this.width && h === this.height) return false;
    this.width = w;
    this.height = h;
    this.renderer.setSize(w, h, true);
    const ratio = this.renderer.getPixelRatio();
    this.overlay.width = Math.round(w * ratio);
    this.overlay.height = Math.round(h * ratio);
    this.overlay.style.width = `${w}px`;
    this.overlay.style.height = `${h}px`;
    return true;
  }

  /** Draws the tiles, each into each of its views, then their contours, axes and dimensions. */
  draw(tiles: Tile[]): void {
    const r = this.renderer;
    r.setScissorTest(false);
    r.setClearColor(BACKGROUND, 1);
    r.clear(true, true, false);
    r.setScissorTest(true);
    for (const tile of tiles) {
      for (const v of tile.views) {
        const bottom = this.height - v.top - v.height;
        tile.aim(v);
        r.setViewport(v.left, bottom, v.width, v.height);
        r.setScissor(v.left, bottom, v.width, v.height);
        r.render(tile.scene, tile.camera);
      }
    }
    r.setScissorTest(false);
    this.drawOverlay(tiles);
    this.frames++;
  }

  private drawOverlay(tiles: Tile[]): void {
    const ctx = this.ctx;
    const ratio = this.renderer.getPixelRatio();
    ctx.setTransform(ratio, 0, 0, ratio, 0, 0);
    ctx.clearRect(0, 0, this.width, this.height);
    for (const tile of tiles) {
      tile.views.forEach((v, k) => {
        this.underlay?.(ctx, tile, v);
        if (tile.showContours) drawContours(ctx, v, tile.contours);
        drawTileAxes(ctx, v, tile.widthUm, tile.depthUm, k === 0, tile.run.section);
        for (const d of tile.dimensions) if (viewShowsEdge(v, d)) drawDimension(ctx, v, d);
        if (tile.run.section) drawPlanMarks(ctx, v, tile.run.section);
      });
    }
  }

  /** Waits for the GPU to finish what it was given (a one-pixel read does). */
  finish(): void {
    const gl = this.renderer.getContext();
    gl.readPixels(0, 0, 1, 1, gl.RGBA, gl.UNSIGNED_BYTE, new Uint8Array(4));
  }

  dispose(): void {
    this.colourMap.dispose();
    this.renderer.dispose();
  }
}

/**
 * Junction contours, clipped to the tile: a dark line under a light one, so the contour
 * shows on every colour of the map. Points closer than half a pixel to the last one drawn
 * are skipped (a 400-column contour in a 150 px tile needs no more).
 */
function drawContours(ctx: CanvasRenderingContext2D, v: TileView, lines: Float64Array[]): void {
  if (lines.length === 0) return;
  ctx.save();
  ctx.beginPath();
  ctx.rect(v.left, v.top, v.width, v.height);
  ctx.clip();
  ctx.beginPath();
  for (const line of lines) {
    let lastX = NaN;
    let lastY = NaN;
    for (let k = 0; k < line.length; k += 2) {
      const x = v.left + (line[k] - v.x0Um) * v.pxPerUmX;
      const y = v.top + (line[k + 1] - v.z0Um) * v.pxPerUmZ;
      if (k === 0) ctx.moveTo(x, y);
      else if (k + 2 >= line.length || Math.abs(x - lastX) + Math.abs(y - lastY) >= 0.5) ctx.lineTo(x, y);
      else continue;
      lastX = x;
      lastY = y;
    }
  }
  ctx.lineJoin = 'round';
  ctx.lineCap = 'round';
  ctx.strokeStyle = '#101014';
  ctx.lineWidth = 3.5;
  ctx.stroke();
  ctx.strokeStyle = '#ffffff';
  ctx.lineWidth = 1.6;
  ctx.stroke();
  ctx.restore();
  ctx.strokeStyle = '#444';
  ctx.lineWidth = 1;
}

/**
 * A view's axes: x along the bottom of the cross-section, depth down the left (labelled on
 * the first pane of a tile only), each with its unit. A section of a 3D run names its own
 * axes; its plan view counts y up from the bottom (the tile's depth is length − y).
 */
function drawTileAxes(ctx: CanvasRenderingContext2D, v: TileView, widthUm: number, depthUm: number, first: boolean, section?: SectionInfo): void {
  const xMin = Math.max(0, v.x0Um);
  const xMax = Math.min(widthUm, v.x0Um + v.width / v.pxPerUmX);
  const zMin = Math.max(0, v.z0Um);
  const zMax = Math.min(depthUm, v.z0Um + v.height / v.pxPerUmZ);
  if (!(xMax > xMin && zMax > zMin)) return;
  const px = (x: number) => v.left + (x - v.x0Um) * v.pxPerUmX;
  const py = (z: number) => v.top + (z - v.z0Um) * v.pxPerUmZ;
  const axisY = Math.min(v.top + v.height, py(depthUm)) + 0.5;
  const axisX = Math.max(v.left, px(0)) - 0.5;
  ctx.font = '10px system-ui, sans-serif';
  ctx.strokeStyle = '#444';
  ctx.fillStyle = '#333';
  ctx.lineWidth = 1;
  ctx.beginPath();
  ctx.moveTo(px(xMin), axisY);
  ctx.lineTo(px(xMax), axisY);
  ctx.moveTo(axisX, py(zMin));
  ctx.lineTo(axisX, py(zMax));
  const flip = section?.downFromUm ?? null;
  const shown = (z: number) => (flip === null ? z : flip - z);
  const xt = niceTicks(xMin, xMax, Math.max(2, Math.floor((px(xMax) - px(xMin)) / 70)));
  const zt = niceTicks(shown(zMin), shown(zMax), Math.max(2, Math.floor((py(zMax) - py(zMin)) / 36)));
  for (const x of xt.values) {
    ctx.moveTo(Math.round(px(x)) + 0.5, axisY);
    ctx.lineTo(Math.round(px(x)) + 0.5, axisY + 4);
  }
  for (const z of zt.values) {
    ctx.moveTo(axisX, Math.round(py(shown(z))) + 0.5);
    ctx.lineTo(axisX - 4, Math.round(py(shown(z))) + 0.5);
  }
  ctx.stroke();
  ctx.textAlign = 'center';
  ctx.textBaseline = 'top';
  for (const x of xt.values) ctx.fillText(formatTick(x, xt), px(x), axisY + 5);
  ctx.fillStyle = '#555';
  ctx.fillText(section?.across ?? 'x, µm', 0.5 * (px(xMin) + px(xMax)), axisY + 18);
  if (!first) return;
  ctx.fillStyle = '#333';
  ctx.textAlign = 'right';
  ctx.textBaseline = 'middle';
  let widest = 0;
  for (const z of zt.values) {
    const label = formatTick(z, zt);
    widest = Math.max(widest, ctx.measureText(label).width);
    ctx.fillText(label, axisX - 6, py(shown(z)));
  }
  ctx.save();
  ctx.fillStyle = '#555';
  ctx.translate(axisX - 12 - widest, 0.5 * (py(zMin) + py(zMax)));
  ctx.rotate(-Math.PI / 2);
  ctx.textAlign = 'center';
  ctx.textBaseline = 'bottom';
  ctx.fillText(section?.down ?? 'depth, µm', 0, 0);
  ctx.restore();
}
