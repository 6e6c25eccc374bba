import GUI, { type Controller } from 'lil-gui';
import type { ColourRange } from './colour-scale.ts';
import type { TileStyle } from './tile.ts';

/** Name of the net-doping layer in every run. */
export const NET = 'net';

/** What the display panel sets. */
export interface PanelState {
  quantity: string;
  autoRange: boolean;
  fromLog10: number;
  toLog10: number;
  isoLines: number;
  depthStretch: number;
  /** the edge view (a window around each mask edge, where the section is much wider than deep) or the full width */
  shown: 'edges' | 'full';
  mask: boolean;
  mesh: boolean;
  contours: boolean;
}

export interface PanelActions {
  /** a display option changed: restyle the tiles and draw */
  restyle(): void;
  /** the depth stretch changed: lay the tiles out again, then restyle */
  relayout(): void;
}

/**
 * The display panel (lil-gui): what the tiles are coloured by, the colour range, iso lines,
 * the depth stretch and the overlays. It owns the panel's state; the app reads `style`.
 */
export class DisplayPanel {
  readonly gui: GUI;
  readonly state: PanelState = {
    quantity: NET, autoRange: true, fromLog10: 14, toLog10: 20, isoLines: 0, depthStretch: 1, shown: 'edges',
    mask: true, mesh: false, contours: true,
  };
  private readonly quantity: Controller;
  private readonly rangeControllers: Controller[];

  constructor(container: HTMLElement, private readonly actions: PanelActions) {
    const p = this.state;
    const gui = new GUI({ container, title: 'display', width: 300 });
    this.gui = gui;
    const restyle = () => actions.restyle();
    this.quantity = gui.add(p, 'quantity', { 'net doping': NET }).name('colour by');
    const range = gui.addFolder('colour range, log₁₀ cm⁻³');
    range.add(p, 'autoRange').name('automatic').onChange(restyle);
    this.rangeControllers = [
      range.add(p, 'fromLog10', 0, 23, 0.1).name('from').onChange(() => { p.autoRange = false; restyle(); }),
      range.add(p, 'toLog10', 0, 23, 0.1).name('to').onChange(() => { p.autoRange = false; restyle(); }),
    ];
    for (const c of range.controllers) c.listen(false);
    gui.add(p, 'isoLines', { none: 0, 'every decade': 1, 'every ½ decade': 0.5, 'every ¼ decade': 0.25 }).name('iso-concentration lines').onChange(restyle);
    gui.add(p, 'shown', { 'edge view': 'edges', 'full width': 'full' }).name('cross-section shown').onChange(() => actions.relayout());
    gui.add(p, 'depthStretch', { '×1 (true shape)': 1, '×2': 2, '×5': 5, '×10': 10, '×20': 20 }).name('depth drawn').onChange(() => actions.relayout());
    gui.add(p, 'mask').name('mask').onChange(restyle);
    gui.add(p, 'mesh').name('mesh lines').onChange(restyle);
    gui.add(p, 'contours').name('junction contours').onChange(restyle);
  }

  /** Offers the layers the runs have; falls back to net doping if the chosen one is gone. */
  setLayers(layers: string[]): void {
    if (!layers.includes(this.state.quantity)) this.state.quantity = NET;
    const options = Object.fromEntries(layers.map((l) => [l === NET ? 'net doping' : l, l]));
    this.quantity.options(options).onChange(() => this.actions.restyle());
    this.quantity.setValue(this.state.quantity);
  }

  /**
   * The tile style: with the automatic range, `automatic` (the runs' own range) is put into
   * the panel first; an empty or inverted range is widened to a tenth of a decade.
   */
  style(automatic: () => ColourRange): TileStyle {
    const p = this.state;
    if (p.autoRange) {
      const r = automatic();
      p.fromLog10 = r.lo;
      p.toLog10 = r.hi;
      for (const c of this.rangeControllers) c.updateDisplay();
    }
    if (p.toLog10 <= p.fromLog10) p.toLog10 = p.fromLog10 + 0.1;
    return {
      layer: p.quantity,
      range: { lo: p.fromLog10, hi: p.toLog10 },
      isoStepDecades: p.isoLines,
      showMask: p.mask,
      showMesh: p.mesh,
      showContours: p.contours,
    };
  }

  /** Sets options from code (the tests and the benchmark); a range given turns the automatic range off. */
  set(options: Partial<PanelState>): void {
    Object.assign(this.state, options);
    if (options.fromLog10 !== undefined || options.toLog10 !== undefined) this.state.autoRange = options.autoRange ?? false;
    for (const c of this.gui.controllersRecursive()) c.updateDisplay();
  }
}
