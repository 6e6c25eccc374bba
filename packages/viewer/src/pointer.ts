import { runTitle } from './caption.ts';
import type { Pane } from './edge-view.ts';
import { pan, zoomAbout, type FocusState } from './layout.ts';
import { showReadout } from './readout.ts';
import { sampleField } from './sample.ts';
import type { Stage } from './stage.ts';
import type { Tile } from './tile.ts';
import { canvasToWorld, type TileView } from './tile-view.ts';
import { sectionPlace } from './cuts3d.ts';

/** The grid of every tile, or one tile focused with its pan and zoom. */
export type Mode = { kind: 'grid' } | { kind: 'focus'; tile: Tile; pane: Pane; depthUm: number; state: FocusState };

/** What the pointer needs of the app. */
export interface PointerHost {
  readonly stage: Stage;
  readonly mode: Mode;
  /** the tile of the grid cell under a canvas point and its pane nearest the point, in grid mode */
  tileAt(px: number, py: number): { tile: Tile; pane: Pane; depthUm: number } | null;
  /** the drawn view under a canvas point, and its tile */
  viewAt(px: number, py: number): { tile: Tile; view: TileView } | null;
  focus(tile: Tile, pane?: Pane, depthUm?: number): void;
  /** fits the focused pane again */
  refit(): void;
  /** the focused tile's new pan and zoom */
  moveFocus(state: FocusState): void;
}

/**
 * The pointer over the view: a click on a tile focuses it; in focus, drag pans, the wheel
 * zooms about the pointer, a double click fits the pane again; the hover readout follows
 * the pointer over any tile.
 */
export class PointerControls {
  private drag: { x: number; y: number; moved: boolean } | null = null;

  constructor(private readonly view: HTMLElement, private readonly readout: HTMLElement, private readonly host: PointerHost) {
    view.addEventListener('pointerdown', (e) => this.down(e));
    view.addEventListener('pointermove', (e) => this.move(e));
    view.addEventListener('pointerup', (e) => this.up(e));
    view.addEventListener('pointerleave', () => this.hideReadout());
    view.addEventListener('wheel', (e) => this.wheel(e), { passive: false });
    view.addEventListener('dblclick', () => host.refit());
  }

  hideReadout(): void {
    this.readout.hidden = true;
  }

  private local(e: { clientX: number; clientY: number }): [number, number] {
    const r = this.host.stage.canvas.getBoundingClientRect();
    return [e.clientX - r.left, e.clientY - r.top];
  }

  private area() {
    return { width: this.host.stage.width, height: this.host.stage.height };
  }

  private down(e: PointerEvent): void {
    if ((e.target as HTMLElement).closest('.readout')) return;
    this.drag = { x: e.clientX, y: e.clientY, moved: false };
    this.view.setPointerCapture(e.pointerId);
  }

  private move(e: PointerEvent): void {
    const [px, py] = this.local(e);
    const mode = this.host.mode;
    if (this.drag && mode.kind === 'focus' && (e.buttons & 1) === 1) {
      const dx = e.clientX - this.drag.x;
      const dy = e.clientY - this.drag.y;
      if (Math.abs(dx) + Math.abs(dy) > 2 || this.drag.moved) {
        this.drag = { x: e.clientX, y: e.clientY, moved: true };
        this.host.moveFocus(pan(mode.state, dx, dy));
      }
    }
    this.hover(px, py);
  }

  private up(e: PointerEvent): void {
    const drag = this.drag;
    this.drag = null;
    if (drag && !drag.moved && this.host.mode.kind === 'grid') {
      const [px, py] = this.local(e);
      const hit = this.host.tileAt(px, py);
      if (hit) this.host.focus(hit.tile, hit.pane, hit.depthUm);
    }
  }

  private wheel(e: WheelEvent): void {
    const mode = this.host.mode;
    if (mode.kind !== 'focus') return;
    e.preventDefault();
    const [px, py] = this.local(e);
    const factor = Math.exp(-e.deltaY * (e.deltaMode === 1 ? 0.05 : 0.0015));
    this.host.moveFocus(zoomAbout(mode.state, this.area(), px, py, factor));
    this.hover(px, py);
  }

  /** The readout at a canvas point of any drawn tile: the run, position, every layer, the side of the junction. */
  private hover(px: number, py: number): void {
    const hit = this.host.viewAt(px, py);
    if (!hit) {
      this.hideReadout();
      return;
    }
    const { tile, view } = hit;
    const [x, z] = canvasToWorld(view, px, py);
    const s = sampleField(tile.run.field, tile.run.layers.length, tile.grid, x, z);
    const place = tile.run.section ? sectionPlace(tile.run.section, x, z) : undefined;
    showReadout(this.readout, tile.run.layers, x, z, s, { runId: tile.run.id, title: runTitle(tile.run) }, place);
  }
}
