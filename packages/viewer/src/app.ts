import GUI, { type Controller } from 'lil-gui';
import { drawColourBar } from './colour-bar.ts';
import { defaultRange, type ColourRange } from './colour-scale.ts';
import { DEFAULT_RECIPE } from './default-recipe.ts';
import {
  fitFocus, focusView, layoutGrid, pan, zoomAbout, type FocusState, type GridLayout,
} from './layout.ts';
import { LiveRunner } from './live.ts';
import { applyLiveFields, liveFields, type LiveField } from './live-params.ts';
import { loadDataSet, type DataSet, type FileSource, type Problem, type RunData } from './load.ts';
import { drawPlot, plotPoints } from './plot.ts';
import { captionElement } from './caption.ts';
import { showReadout } from './readout.ts';
import { sampleField } from './sample.ts';
import { Stage } from './stage.ts';
import { canvasToWorld, Tile, worldToCanvas, type TileStyle } from './tile.ts';

const NET = 'net';
const LIVE_ID = 'live';

function layerLabel(name: string): string {
  return name === NET ? '|net doping|' : name;
}

type Mode = { kind: 'grid' } | { kind: 'focus'; tile: Tile; state: FocusState };

interface PanelState {
  quantity: string;
  autoRange: boolean;
  fromLog10: number;
  toLog10: number;
  isoLines: number;
  depthStretch: number;
  mask: boolean;
  mesh: boolean;
  contours: boolean;
}

/** Timing of the last load, ms (for the benchmark and the tests). */
export interface Timing {
  loadMs: number | null;
  /** building the tiles' geometry from the loaded arrays */
  buildMs: number | null;
  firstFrameMs: number | null;
  sinceNavigationMs: number | null;
}

/**
 * The page: one data set at a time as tiles in a grid (or one tile focused), the shared
 * colour bar and length scale, the sweep plot, the panel, and live re-runs.
 */
export class App {
  readonly stage: Stage;
  private data: DataSet | null = null;
  private tiles: Tile[] = [];
  private liveTile: Tile | null = null;
  private mode: Mode = { kind: 'grid' };
  private grid: GridLayout | null = null;
  private layoutDirty = true;
  private framePending = false;
  private frameWaiters: (() => void)[] = [];
  private loadStartedAt: number | null = null;
  readonly timing: Timing = { loadMs: null, buildMs: null, firstFrameMs: null, sinceNavigationMs: null };
  private readonly panel: PanelState = {
    quantity: NET, autoRange: true, fromLog10: 14, toLog10: 20, isoLines: 0, depthStretch: 0,
    mask: true, mesh: false, contours: true,
  };
  private readonly gui: GUI;
  private quantityController!: Controller;
  private rangeControllers: Controller[] = [];
  private liveFolder: GUI;
  private liveRecipe: unknown = DEFAULT_RECIPE;
  private liveRecipeLabel = 'built-in demo recipe';
  private liveFieldsList: LiveField[] = [];
  private readonly live = new LiveRunner();
  private liveProblems: Problem[] = [];
  private readonly captions: HTMLElement;
  private readonly readout: HTMLElement;
  private readonly messages: HTMLElement;
  private readonly empty: HTMLElement;
  private drag: { x: number; y: number; moved: boolean } | null = null;

  constructor(private readonly view: HTMLElement, side: HTMLElement) {
    this.stage = new Stage(view);
    this.captions = this.make(view, 'div', 'captions');
    this.readout = this.make(view, 'div', 'readout');
    this.readout.hidden = true;
    this.empty = this.make(view, 'div', 'empty');
    this.messages = document.getElementById('messages')!;
    this.make(side, 'div', 'colour-bar').id = 'colour-bar';
    this.make(side, 'div', 'scale-note').id = 'scale-note';
    this.make(side, 'div', 'plot').id = 'plot';
    side.append(document.getElementById('panel')!);
    this.gui = new GUI({ container: document.getElementById('panel')!, title: 'display', width: 300 });
    this.buildPanel();
    this.liveFolder = this.gui.addFolder('live re-run');
    this.buildLiveFolder();
    new ResizeObserver(() => this.invalidate(true)).observe(view);
    this.bindPointer();
    window.addEventListener('keydown', (e) => {
      if (e.key === 'Escape' && this.mode.kind === 'focus') this.showGrid();
    });
    document.getElementById('back')!.addEventListener('click', () => this.showGrid());
  }

  private make(parent: HTMLElement, tag: string, className: string): HTMLElement {
    const e = document.createElement(tag);
    e.className = className;
    parent.append(e);
    return e;
  }

  // ---- data -------------------------------------------------------------------------

  async open(source: FileSource): Promise<void> {
    this.loadStartedAt = performance.now();
    this.timing.loadMs = null;
    this.timing.firstFrameMs = null;
    this.setEmpty(`reading ${source.label} …`);
    document.getElementById('source-label')!.textContent = source.label;
    let data: DataSet;
    try {
      data = await loadDataSet(source);
    } catch (e) {
      data = { label: source.label, kind: 'run', parameters: [], runs: [], problems: [{ file: source.label, reason: (e as Error).message }], recipe: null };
    }
    this.timing.loadMs = performance.now() - this.loadStartedAt;
    this.setData(data);
  }

  /** Replaces the tiles: the old ones free their GPU memory first. */
  setData(data: DataSet): void {
    for (const t of this.tiles) t.dispose();
    this.liveTile = null;
    this.data = data;
    this.mode = { kind: 'grid' };
    const started = performance.now();
    this.tiles = data.runs.map((r) => new Tile(r, this.stage.colourMap));
    if (data.recipe !== null && data.recipe !== undefined) this.setLiveRecipe(data.recipe, `recipe.json in ${data.label}`);
    this.refreshQuantities();
    this.showProblems();
    drawPlot(document.getElementById('plot')!, plotPoints(data.runs));
    this.setEmpty(this.tiles.length === 0 ? 'Nothing to show: see the messages above.' : null);
    this.applyStyle();
    this.timing.buildMs = performance.now() - started;
  }

  setLiveRecipe(recipe: unknown, label: string): void {
    this.liveRecipe = recipe;
    this.liveRecipeLabel = label;
    this.buildLiveFolder();
  }

  private showProblems(): void {
    const problems = [...(this.data?.problems ?? []), ...this.liveProblems];
    this.messages.replaceChildren();
    this.messages.hidden = problems.length === 0;
    for (const p of problems) {
      const line = document.createElement('div');
      line.className = 'problem';
      const file = document.createElement('code');
      file.textContent = p.file;
      line.append(file, `: ${p.reason}`);
      this.messages.append(line);
    }
  }

  private setEmpty(text: string | null): void {
    this.empty.hidden = text === null;
    this.empty.textContent = text ?? '';
  }

  // ---- style ------------------------------------------------------------------------

  private allLayers(): string[] {
    const names = new Set<string>([NET]);
    for (const t of this.tiles) for (const l of t.run.layers) names.add(l);
    return [...names];
  }

  private refreshQuantities(): void {
    const layers = this.allLayers();
    if (!layers.includes(this.panel.quantity)) this.panel.quantity = NET;
    const options = Object.fromEntries(layers.map((l) => [l === NET ? 'net doping' : l, l]));
    this.quantityController.options(options).onChange(() => this.applyStyle());
    this.quantityController.setValue(this.panel.quantity);
  }

  private autoRange(): ColourRange {
    let max = 0;
    let background = Infinity;
    for (const t of this.tiles) {
      max = Math.max(max, t.maxMagnitude(this.panel.quantity));
      background = Math.min(background, t.run.report.substrate.concentrationCm3);
    }
    if (!(max > 0)) max = 1e20;
    if (!Number.isFinite(background)) background = 1e14;
    return defaultRange(max, background);
  }

  get style(): TileStyle {
    return {
      layer: this.panel.quantity,
      range: { lo: this.panel.fromLog10, hi: this.panel.toLog10 },
      isoStepDecades: this.panel.isoLines,
      showMask: this.panel.mask,
      showMesh: this.panel.mesh,
      showContours: this.panel.contours,
    };
  }

  applyStyle(): void {
    if (this.panel.autoRange) {
      const r = this.autoRange();
      this.panel.fromLog10 = r.lo;
      this.panel.toLog10 = r.hi;
      for (const c of this.rangeControllers) c.updateDisplay();
    }
    if (this.panel.toLog10 <= this.panel.fromLog10) this.panel.toLog10 = this.panel.fromLog10 + 0.1;
    const style = this.style;
    for (const t of this.tiles) t.applyStyle(style);
    drawColourBar(document.getElementById('colour-bar')!, this.stage.colourMapBytes, style.range, layerLabel(style.layer));
    this.invalidate(true);
  }

  private buildPanel(): void {
    const p = this.panel;
    const gui = this.gui;
    this.quantityController = gui.add(p, 'quantity', { 'net doping': NET }).name('colour by');
    const range = gui.addFolder('colour range, log₁₀ cm⁻³');
    range.add(p, 'autoRange').name('automatic').onChange(() => this.applyStyle());
    this.rangeControllers = [
      range.add(p, 'fromLog10', 0, 23, 0.1).name('from').onChange(() => { p.autoRange = false; this.applyStyle(); }),
      range.add(p, 'toLog10', 0, 23, 0.1).name('to').onChange(() => { p.autoRange = false; this.applyStyle(); }),
    ];
    for (const c of range.controllers) c.listen(false);
    gui.add(p, 'isoLines', { none: 0, 'every decade': 1, 'every ½ decade': 0.5, 'every ¼ decade': 0.25 }).name('iso-concentration lines').onChange(() => this.applyStyle());
    gui.add(p, 'depthStretch', { automatic: 0, '×1 (true shape)': 1, '×2': 2, '×5': 5, '×10': 10, '×20': 20 }).name('depth drawn').onChange(() => {
      if (this.mode.kind === 'focus') this.focus(this.mode.tile);
      this.applyStyle();
    });
    gui.add(p, 'mask').name('mask').onChange(() => this.applyStyle());
    gui.add(p, 'mesh').name('mesh lines').onChange(() => this.applyStyle());
    gui.add(p, 'contours').name('junction contours').onChange(() => this.applyStyle());
  }

  /** Sets display options from code (the tests and the benchmark use it), then draws. */
  async set(options: Partial<PanelState>): Promise<void> {
    Object.assign(this.panel, options);
    if (options.fromLog10 !== undefined || options.toLog10 !== undefined) this.panel.autoRange = options.autoRange ?? false;
    for (const c of this.gui.controllersRecursive()) c.updateDisplay();
    this.applyStyle();
    await this.nextFrame();
  }

  // ---- live -------------------------------------------------------------------------

  private liveState = { status: 'idle', run: () => void this.runLive(), stop: () => this.stopLive(), pickRecipe: () => document.getElementById('recipe-input')!.click() };

  private buildLiveFolder(): void {
    const folder = this.liveFolder;
    for (const c of [...folder.controllers]) c.destroy();
    this.liveFieldsList = liveFields(this.liveRecipe);
    const values: Record<string, number | string> = {};
    for (const f of this.liveFieldsList) {
      values[f.path] = f.value;
      const c = folder.add(values, f.path).name(f.label);
      c.onChange((v: number | string) => { f.value = v; });
      c.domElement.dataset.path = f.path;
    }
    folder.add(this.liveState, 'run').name('run in the background');
    folder.add(this.liveState, 'stop').name('stop');
    folder.add(this.liveState, 'pickRecipe').name('recipe from a file…');
    folder.add(this.liveState, 'status').name(this.liveRecipeLabel).disable().listen();
  }

  /** Runs the recipe as edited in the panel, in the worker; the result becomes the "live" tile. */
  async runLive(): Promise<void> {
    const recipe = applyLiveFields(this.liveRecipe, this.liveFieldsList);
    const bar = document.getElementById('progress')!;
    const meter = bar.querySelector('progress')!;
    const text = bar.querySelector('span')!;
    bar.hidden = false;
    meter.value = 0;
    text.textContent = 'solving… 0 %';
    this.liveState.status = 'solving';
    this.liveProblems = [];
    this.showProblems();
    try {
      const result = await this.live.run(recipe, (fraction) => {
        meter.value = fraction;
        text.textContent = `solving… ${Math.round(100 * fraction)} %`;
        this.liveState.status = `solving ${Math.round(100 * fraction)} %`;
      });
      const run: RunData = {
        id: LIVE_ID, dir: '(live)', values: {}, report: result.report, x: result.x, z: result.z,
        field: result.field, layers: result.report.field.layers,
      };
      this.setLiveTile(new Tile(run, this.stage.colourMap));
      this.liveState.status = `done in ${result.seconds.toFixed(2)} s`;
      text.textContent = `live run done in ${result.seconds.toFixed(2)} s`;
    } catch (e) {
      const message = (e as Error).message ?? String(e);
      this.liveState.status = message === 'stopped' ? 'stopped' : 'failed';
      text.textContent = message === 'stopped' ? 'live run stopped' : 'live run failed';
      if (message !== 'stopped') {
        const bad = (e as Error).name === 'RecipeError' ? 'the edited recipe' : 'the live run';
        this.liveProblems = [{ file: `live: ${this.liveRecipeLabel}`, reason: `${bad}: ${message}` }];
        this.showProblems();
      }
    } finally {
      meter.value = 1;
      document.body.dataset.live = this.liveState.status;
    }
  }

  stopLive(): void {
    this.live.stop();
  }

  private setLiveTile(tile: Tile): void {
    const old = this.liveTile;
    const focused = this.mode.kind === 'focus' && this.mode.tile === old;
    if (old) {
      this.tiles = this.tiles.filter((t) => t !== old);
      old.dispose();
    }
    this.liveTile = tile;
    this.tiles.push(tile);
    this.refreshQuantities();
    this.applyStyle();
    if (focused) this.focus(tile);
    this.setEmpty(null);
  }

  // ---- layout and drawing -----------------------------------------------------------

  invalidate(layout = false): void {
    if (layout) this.layoutDirty = true;
    if (this.framePending) return;
    this.framePending = true;
    requestAnimationFrame(() => this.frame());
  }

  nextFrame(): Promise<void> {
    return new Promise((resolve) => {
      this.frameWaiters.push(resolve);
      this.invalidate();
    });
  }

  private layout(): void {
    const area = { width: this.stage.width, height: this.stage.height };
    if (this.mode.kind === 'grid') {
      for (const t of this.tiles) t.view = null;
      if (this.tiles.length === 0) return;
      const params = this.data?.parameters ?? [];
      let columns: number | undefined;
      if (params.length >= 2) {
        const last = params[params.length - 1];
        const distinct = new Set(this.tiles.map((t) => String(t.run.values[last])));
        if (distinct.size <= 8) columns = distinct.size;
      }
      this.grid = layoutGrid(this.tiles.map((t) => ({ widthUm: t.widthUm, depthUm: t.depthUm })), area, this.panel.depthStretch, columns);
      this.tiles.forEach((t, k) => t.setView(this.grid!.views[k]));
      this.note(this.grid.stretch);
    } else {
      for (const t of this.tiles) t.view = null;
      this.mode.tile.setView(focusView(this.mode.state, area));
      this.note(this.mode.state.stretch);
    }
    this.layoutDirty = false;
  }

  private note(stretch: number): void {
    const text = `Lengths in µm, one scale for every tile${stretch === 1 ? ' (true shape).' : `; depth drawn ×${stretch}.`}`;
    document.getElementById('scale-note')!.textContent = this.tiles.length ? text : '';
  }

  private visibleTiles(): Tile[] {
    return this.mode.kind === 'focus' ? [this.mode.tile] : this.tiles;
  }

  private frame(): void {
    this.framePending = false;
    if (this.stage.resize()) this.layoutDirty = true;
    if (this.layoutDirty) this.layout();
    const visible = this.visibleTiles();
    this.stage.draw(visible);
    this.drawCaptions(visible);
    if (this.timing.firstFrameMs === null && this.loadStartedAt !== null && visible.length > 0) {
      // Wait for the GPU to finish the frame so the figure is the real drawing time.
      const gl = this.stage.renderer.getContext();
      gl.readPixels(0, 0, 1, 1, gl.RGBA, gl.UNSIGNED_BYTE, new Uint8Array(4));
      const now = performance.now();
      this.timing.firstFrameMs = now - this.loadStartedAt;
      this.timing.sinceNavigationMs = now;
    }
    const waiters = this.frameWaiters;
    this.frameWaiters = [];
    for (const w of waiters) w();
  }

  private drawCaptions(visible: Tile[]): void {
    this.captions.replaceChildren();
    for (const t of visible) {
      const v = t.view;
      if (!v) continue;
      const c = captionElement(t.run, t.run.id === LIVE_ID);
      c.style.left = `${v.left}px`;
      c.style.top = `${Math.min(this.stage.height - 30, v.top + v.height + 17)}px`;
      c.style.maxWidth = `${Math.max(v.width, (this.grid?.cellWidth ?? 200) - 50)}px`;
      this.captions.append(c);
    }
  }

  // ---- focus, pan, zoom, readout ----------------------------------------------------

  focus(tile: Tile): void {
    const area = { width: this.stage.width, height: this.stage.height };
    this.mode = { kind: 'focus', tile, state: fitFocus({ widthUm: tile.widthUm, depthUm: tile.depthUm }, area, this.panel.depthStretch) };
    document.getElementById('back')!.hidden = false;
    this.invalidate(true);
  }

  showGrid(): void {
    this.mode = { kind: 'grid' };
    this.readout.hidden = true;
    document.getElementById('back')!.hidden = true;
    this.invalidate(true);
  }

  private local(e: { clientX: number; clientY: number }): [number, number] {
    const r = this.stage.canvas.getBoundingClientRect();
    return [e.clientX - r.left, e.clientY - r.top];
  }

  private tileAt(px: number, py: number): Tile | null {
    const g = this.grid;
    if (this.mode.kind !== 'grid' || !g) return null;
    const col = Math.floor(px / g.cellWidth);
    const row = Math.floor(py / g.cellHeight);
    if (col < 0 || col >= g.columns || row < 0) return null;
    return this.tiles[row * g.columns + col] ?? null;
  }

  private bindPointer(): void {
    const el = this.view;
    el.addEventListener('pointerdown', (e) => {
      if ((e.target as HTMLElement).closest('.readout')) return;
      this.drag = { x: e.clientX, y: e.clientY, moved: false };
      el.setPointerCapture(e.pointerId);
    });
    el.addEventListener('pointermove', (e) => {
      const [px, py] = this.local(e);
      if (this.drag && this.mode.kind === 'focus' && (e.buttons & 1) === 1) {
        const dx = e.clientX - this.drag.x;
        const dy = e.clientY - this.drag.y;
        if (Math.abs(dx) + Math.abs(dy) > 2 || this.drag.moved) {
          this.drag = { x: e.clientX, y: e.clientY, moved: true };
          this.mode.state = pan(this.mode.state, dx, dy);
          this.invalidate(true);
        }
      }
      this.hover(px, py);
    });
    el.addEventListener('pointerup', (e) => {
      const drag = this.drag;
      this.drag = null;
      if (drag && !drag.moved && this.mode.kind === 'grid') {
        const [px, py] = this.local(e);
        const tile = this.tileAt(px, py);
        if (tile) this.focus(tile);
      }
    });
    el.addEventListener('pointerleave', () => { this.readout.hidden = true; });
    el.addEventListener('wheel', (e) => {
      if (this.mode.kind !== 'focus') return;
      e.preventDefault();
      const [px, py] = this.local(e);
      const factor = Math.exp(-e.deltaY * (e.deltaMode === 1 ? 0.05 : 0.0015));
      this.mode.state = zoomAbout(this.mode.state, { width: this.stage.width, height: this.stage.height }, px, py, factor);
      this.invalidate(true);
      this.hover(px, py);
    }, { passive: false });
    el.addEventListener('dblclick', () => {
      if (this.mode.kind === 'focus') this.focus(this.mode.tile);
    });
  }

  /** The readout at a canvas point of the focused tile: position, every layer, the side of the junction. */
  private hover(px: number, py: number): void {
    if (this.mode.kind !== 'focus') {
      this.readout.hidden = true;
      return;
    }
    const tile = this.mode.tile;
    const view = focusView(this.mode.state, { width: this.stage.width, height: this.stage.height });
    const [x, z] = canvasToWorld(view, px, py);
    const s = sampleField(tile.run.field, tile.run.layers.length, tile.grid, x, z);
    showReadout(this.readout, tile.run.layers, x, z, s);
  }

  // ---- for the tests and the benchmark ----------------------------------------------

  /** Where a world point of a tile is drawn, in client (page) px; null if the tile is not drawn. */
  worldToClient(runId: string, xUm: number, zUm: number): [number, number] | null {
    const tile = this.tiles.find((t) => t.run.id === runId);
    if (!tile?.view) return null;
    const [px, py] = worldToCanvas(tile.view, xUm, zUm);
    const r = this.stage.canvas.getBoundingClientRect();
    return [r.left + px, r.top + py];
  }

  /** Draws a frame now and waits for the GPU to finish it; returns the time taken, ms. */
  drawNow(): number {
    const started = performance.now();
    this.layoutDirty = true;
    this.frame();
    const gl = this.stage.renderer.getContext();
    gl.readPixels(0, 0, 1, 1, gl.RGBA, gl.UNSIGNED_BYTE, new Uint8Array(4));
    return performance.now() - started;
  }

  /** Zooms the focused tile about the centre of the view (the benchmark's pan/zoom probe). */
  zoomBy(factor: number, dxPx = 0, dyPx = 0): void {
    if (this.mode.kind !== 'focus') return;
    const area = { width: this.stage.width, height: this.stage.height };
    this.mode.state = pan(zoomAbout(this.mode.state, area, area.width / 2, area.height / 2, factor), dxPx, dyPx);
    this.layoutDirty = true;
  }

  focusRun(runId: string): Promise<void> {
    const tile = this.tiles.find((t) => t.run.id === runId);
    if (tile) this.focus(tile);
    return this.nextFrame();
  }

  snapshot() {
    return {
      mode: this.mode.kind,
      focused: this.mode.kind === 'focus' ? this.mode.tile.run.id : null,
      tiles: this.tiles.map((t) => ({ id: t.run.id, dir: t.run.dir, values: t.run.values, view: t.view, columns: t.grid.columns, rows: t.grid.rows, detail: t.detail })),
      problems: [...(this.data?.problems ?? []), ...this.liveProblems],
      frames: this.stage.frames,
      timing: { ...this.timing },
      gpu: { ...this.stage.renderer.info.memory },
      live: this.liveState.status,
      recipe: this.liveRecipeLabel,
    };
  }
}
