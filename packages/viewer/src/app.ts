import { drawColourBar } from './colour-bar.ts';
import { defaultRange, type ColourRange } from './colour-scale.ts';
import type { PageElements } from './elements.ts';
import { arrange, scaleNote, tileAt, viewAt } from './arrange.ts';
import type { Pane } from './edge-view.ts';
import { fitFocus, type FocusState, type GridLayout } from './layout.ts';
import { LivePanel } from './live-panel.ts';
import { loadDataSet, type DataSet, type FileSource, type Problem, type RunData } from './load.ts';
import { showProblems } from './messages.ts';
import { DisplayPanel, NET, type PanelState } from './panel.ts';
import { drawPlot, plotPoints } from './plot.ts';
import { placeCaptions } from './caption.ts';
import { placeDimensionLabels } from './dimensions.ts';
import { CutPanel } from './cut-panel.ts';
import { ElectricalOverlay } from './electrical-overlay.ts';
import { placePlanLabels } from './plan-marks.ts';
import { RunTiles } from './run-tiles.ts';
import { isVolumeRun, trueShape } from './sections3d.ts';
import { PointerControls, type Mode } from './pointer.ts';
import { Stage } from './stage.ts';
import { Tile } from './tile.ts';
import type { TileView } from './tile-view.ts';

function layerLabel(name: string): string {
  return name === NET ? '|net doping|' : name;
}

/** The colour range that shows every tile's layer: its largest magnitude down to below the substrates. */
function automaticRange(tiles: readonly Tile[], layer: string): ColourRange {
  let max = 0;
  let background = Infinity;
  for (const t of tiles) {
    max = Math.max(max, t.maxMagnitude(layer));
    background = Math.min(background, t.run.report.substrate.concentrationCm3);
  }
  if (!(max > 0)) max = 1e20;
  if (!Number.isFinite(background)) background = 1e14;
  return defaultRange(max, background);
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
 * colour bar and length scale, the sweep plot, the display panel and the live re-runs.
 */
export class App {
  readonly stage: Stage;
  private data: DataSet | null = null;
  private tileList: Tile[] = [];
  /** the loaded runs' and the live run's tiles (a 3D run has several) */
  private readonly runTiles = new RunTiles((run) => new Tile(run, this.stage.colourMap));
  private modeNow: Mode = { kind: 'grid' };
  private grid: GridLayout | null = null;
  private layoutDirty = true;
  private framePending = false;
  private frameWaiters: (() => void)[] = [];
  private loadStartedAt: number | null = null;
  readonly timing: Timing = { loadMs: null, buildMs: null, firstFrameMs: null, sinceNavigationMs: null };
  readonly panel: DisplayPanel;
  readonly live: LivePanel;
  private liveProblems: Problem[] = [];
  private readonly pointer: PointerControls;
  /** where the cuts through 3D runs go */
  readonly cuts: CutPanel;
  readonly electrical: ElectricalOverlay; // potential or field at a bias, depletion edges

  constructor(private readonly el: PageElements) {
    this.stage = new Stage(el.view);
    this.panel = new DisplayPanel(el.panel, {
      restyle: () => this.applyStyle(),
      relayout: () => {
        this.refit();
        this.applyStyle();
      },
    });
    this.live = new LivePanel(this.panel.gui.addFolder('live re-run'), el, {
      show: (run) => this.setLiveRun(run),
      problems: (problems) => {
        this.liveProblems = problems;
        this.showProblems();
      },
    });
    this.cuts = new CutPanel(this.panel.gui.addFolder('3D cuts'), () => this.showCuts());
    this.electrical = new ElectricalOverlay(this.panel.gui.addFolder('electrical'), this.stage, () => this.applyStyle());
    new ResizeObserver(() => this.invalidate(true)).observe(el.view);
    this.pointer = new PointerControls(el.view, el.readout, this);
    window.addEventListener('keydown', (e) => {
      if (e.key === 'Escape' && this.modeNow.kind === 'focus') this.showGrid();
    });
    el.back.addEventListener('click', () => this.showGrid());
    el.shownToggle.addEventListener('click', () => this.toggleShown());
  }

  get mode(): Mode {
    return this.modeNow;
  }

  get tiles(): readonly Tile[] {
    return this.tileList;
  }

  /** Problems of the data set and of the live run. */
  get problems(): Problem[] {
    return [...(this.data?.problems ?? []), ...this.liveProblems];
  }

  // ---- data -------------------------------------------------------------------------

  async open(source: FileSource): Promise<void> {
    this.loadStartedAt = performance.now();
    this.timing.loadMs = null;
    this.timing.firstFrameMs = null;
    this.setEmpty(`reading ${source.label} …`);
    this.el.sourceLabel.textContent = source.label;
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
    this.data = data;
    this.modeNow = { kind: 'grid' };
    const started = performance.now();
    this.cuts.setRuns(data.runs);
    this.tileList = this.runTiles.load(data.runs, this.cuts.choice);
    if (data.recipe !== null && data.recipe !== undefined) this.setLiveRecipe(data.recipe, `recipe.json in ${data.label}`);
    this.refreshQuantities();
    this.showProblems();
    drawPlot(this.el.plot, plotPoints(data.runs));
    this.setEmpty(this.tileList.length === 0 ? 'Nothing to show: see the messages above.' : null);
    this.applyStyle();
    this.timing.buildMs = performance.now() - started;
  }

  /** The 3D runs' sections anew, for the cuts chosen now (the 2D runs' tiles stay). */
  private showCuts(): void {
    this.tileList = this.runTiles.recut(this.data?.runs ?? [], this.cuts.choice);
    if (this.modeNow.kind === 'focus') this.showGrid();
    this.applyStyle();
  }

  setLiveRecipe(recipe: unknown, label: string): void {
    this.live.setRecipe(recipe, label);
  }

  /** Shows a message in the middle of the view (null hides it). */
  setEmpty(text: string | null): void {
    this.el.empty.hidden = text === null;
    this.el.empty.textContent = text ?? '';
  }

  private showProblems(): void {
    showProblems(this.el.messages, this.problems);
  }

  /** The live re-run's tiles in place of the last ones: one, or a 3D run's plan view and cuts. */
  private setLiveRun(run: RunData): void {
    const focused = this.modeNow.kind === 'focus' && this.runTiles.isLive(this.modeNow.tile) ? this.modeNow.tile.run.id : null;
    if (isVolumeRun(run) && !this.cuts.shown) this.cuts.setRuns([run]);
    this.tileList = this.runTiles.setLive(run, this.cuts.choice);
    this.refreshQuantities();
    this.applyStyle();
    const again = this.tileList.find((t) => t.run.id === focused && this.runTiles.isLive(t));
    if (again && this.modeNow.kind === 'focus') this.focus(again, this.modeNow.pane, this.modeNow.depthUm);
    else if (focused !== null) this.showGrid();
    this.setEmpty(null);
  }

  // ---- style ------------------------------------------------------------------------

  private refreshQuantities(): void {
    const names = new Set<string>([NET]);
    for (const t of this.tileList) for (const l of t.run.layers) names.add(l);
    this.panel.setLayers([...names]);
  }

  applyStyle(): void {
    const style = this.panel.style(() => automaticRange(this.tileList, this.panel.state.quantity));
    for (const t of this.tileList) t.applyStyle(style);
    drawColourBar(this.el.colourBar, this.stage.colourMapBytes, style.range, layerLabel(style.layer));
    this.electrical.restyle(this.tileList, this.el.colourBar);
    this.invalidate(true);
  }

  /** Sets display options from code (the tests and the benchmark use it), then draws. */
  async set(options: Partial<PanelState>): Promise<void> {
    this.panel.set(options);
    this.applyStyle();
    await this.nextFrame();
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

  private area() {
    return { width: this.stage.width, height: this.stage.height };
  }

  private layout(): void {
    const { depthStretch, shown } = this.panel.state;
    const a = arrange(this.tileList, this.modeNow, { area: this.area(), stretch: trueShape(this.tileList, depthStretch), edges: shown === 'edges', parameters: this.data?.parameters ?? [] });
    this.grid = a.grid;
    this.el.scaleNote.textContent = this.tileList.length ? scaleNote(a, this.modeNow.kind === 'focus') : '';
    const toggle = this.el.shownToggle;
    toggle.hidden = !a.edgesAvailable || this.modeNow.kind === 'focus';
    toggle.textContent = shown === 'edges' ? 'Full width' : 'Edge view';
    toggle.title = shown === 'edges' ? 'show the whole width of every cross-section' : 'show a window around each mask edge, true to scale';
    this.layoutDirty = false;
  }

  /** Between the edge view and the full width (the header's button). */
  toggleShown(): void {
    this.panel.set({ shown: this.panel.state.shown === 'edges' ? 'full' : 'edges' });
    this.invalidate(true);
  }

  private visibleTiles(): Tile[] {
    return this.modeNow.kind === 'focus' ? [this.modeNow.tile] : this.tileList;
  }

  /** Lays out if needed and draws every visible tile; `force` lays out anew. */
  frame(force = false): void {
    this.framePending = false;
    if (this.stage.resize() || force) this.layoutDirty = true;
    if (this.layoutDirty) this.layout();
    const visible = this.visibleTiles();
    this.stage.draw(visible);
    placeCaptions(this.el.captions, visible, this.stage.height, this.grid?.cellWidth ?? 200);
    placeDimensionLabels(this.el.captions, visible);
    placePlanLabels(this.el.captions, visible);
    if (this.timing.firstFrameMs === null && this.loadStartedAt !== null && visible.length > 0) {
      // Wait for the GPU to finish the frame so the figure is the real drawing time.
      this.stage.finish();
      const now = performance.now();
      this.timing.firstFrameMs = now - this.loadStartedAt;
      this.timing.sinceNavigationMs = now;
    }
    const waiters = this.frameWaiters;
    this.frameWaiters = [];
    for (const w of waiters) w();
  }

  // ---- focus ------------------------------------------------------------------------

  /** Focuses a pane of a tile (the whole cross-section when none is given). */
  focus(tile: Tile, pane: Pane = { x0Um: 0, x1Um: tile.widthUm }, depthUm = tile.depthUm): void {
    const state = fitFocus(pane, depthUm, this.area(), trueShape(this.tileList, this.panel.state.depthStretch));
    this.modeNow = { kind: 'focus', tile, pane, depthUm, state };
    this.el.back.hidden = false;
    this.invalidate(true);
  }

  refit(): void {
    if (this.modeNow.kind === 'focus') this.focus(this.modeNow.tile, this.modeNow.pane, this.modeNow.depthUm);
  }

  moveFocus(state: FocusState): void {
    if (this.modeNow.kind !== 'focus') return;
    this.modeNow.state = state;
    this.invalidate(true);
  }

  showGrid(): void {
    this.modeNow = { kind: 'grid' };
    this.pointer.hideReadout();
    this.el.back.hidden = true;
    this.invalidate(true);
  }

  tileAt(px: number, py: number): { tile: Tile; pane: Pane; depthUm: number } | null {
    return this.modeNow.kind === 'grid' && this.grid ? tileAt(this.tileList, this.grid, px, py) : null;
  }

  viewAt(px: number, py: number): { tile: Tile; view: TileView } | null {
    return viewAt(this.visibleTiles(), px, py);
  }
}
