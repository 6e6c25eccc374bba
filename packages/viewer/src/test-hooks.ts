import type { App, Timing } from './app.ts';
import type { ElectricalState } from './electrical-overlay.ts';
import { pan, zoomAbout } from './layout.ts';
import type { PanelState } from './panel.ts';
import type { CutChoice } from './sections3d.ts';
import { worldToCanvas } from './tile-view.ts';

/**
 * What the browser tests and the benchmark reach through `window.edgewise.app`: the page's
 * state as plain data, where a world point is drawn, display options set from code, and
 * frames drawn and timed on demand. Nothing of the page itself depends on this.
 */
export class TestHooks {
  constructor(private readonly app: App) {}

  get timing(): Timing {
    return this.app.timing;
  }

  set(options: Partial<PanelState>): Promise<void> {
    return this.app.set(options);
  }

  nextFrame(): Promise<void> {
    return this.app.nextFrame();
  }

  /** Moves the cuts through 3D runs, as the panel's "3D cuts" folder does. */
  setCuts(choice: Partial<CutChoice>): Promise<void> {
    this.app.cuts.set(choice);
    return this.app.nextFrame();
  }

  /** Sets the electrical overlay, as the panel's "electrical" folder does. */
  setElectrical(options: Partial<ElectricalState>): Promise<void> {
    this.app.electrical.set(options);
    return this.app.nextFrame();
  }

  /** Where a world point of a tile is drawn, in client (page) px; null if the tile is not drawn. */
  worldToClient(runId: string, xUm: number, zUm: number): [number, number] | null {
    const tile = this.app.tiles.find((t) => t.run.id === runId);
    if (!tile?.view) return null;
    // The pane that shows x (the edge view has several), else the first.
    const view = tile.views.find((v) => xUm >= v.x0Um && xUm <= v.x0Um + v.width / v.pxPerUmX) ?? tile.view;
    const [px, py] = worldToCanvas(view, xUm, zUm);
    const r = this.app.stage.canvas.getBoundingClientRect();
    return [r.left + px, r.top + py];
  }

  /** Draws a frame now and waits for the GPU to finish it; returns the time taken, ms. */
  drawNow(): number {
    const started = performance.now();
    this.app.frame(true);
    this.app.stage.finish();
    return performance.now() - started;
  }

  /** Zooms the focused tile about the centre of the view (the benchmark's pan/zoom probe). */
  zoomBy(factor: number, dxPx = 0, dyPx = 0): void {
    const mode = this.app.mode;
    if (mode.kind !== 'focus') return;
    const area = { width: this.app.stage.width, height: this.app.stage.height };
    this.app.moveFocus(pan(zoomAbout(mode.state, area, area.width / 2, area.height / 2, factor), dxPx, dyPx));
  }

  focusRun(runId: string): Promise<void> {
    const tile = this.app.tiles.find((t) => t.run.id === runId);
    if (tile) this.app.focus(tile);
    return this.app.nextFrame();
  }

  snapshot() {
    const { app } = this;
    const mode = app.mode;
    return {
      mode: mode.kind,
      focused: mode.kind === 'focus' ? mode.tile.run.id : null,
      tiles: app.tiles.map((t) => ({ id: t.run.id, dir: t.run.dir, values: t.run.values, view: t.view, views: t.views, section: t.run.section?.kind ?? null, columns: t.grid.columns, rows: t.grid.rows, detail: t.detail })),
      problems: app.problems,
      frames: app.stage.frames,
      timing: { ...app.timing },
      gpu: { ...app.stage.renderer.info.memory },
      live: app.live.state.status,
      recipe: app.live.recipeLabel,
      shown: app.panel.state.shown,
    };
  }
}
