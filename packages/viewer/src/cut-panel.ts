import type GUI from 'lil-gui';
import { CORNER_NAMES, outlineCorners, type CornerName } from './cuts3d.ts';
import type { RunData } from './load.ts';
import { chosenCuts, cornerLabel, DEFAULT_CHOICE, isVolumeRun, type CutChoice } from './sections3d.ts';

/**
 * The panel's "3D cuts" folder, shown when a run is 3D: where the cuts along x and along y
 * go and which corner the diagonal cut passes through. It starts at the first 3D run's
 * defaults (its first rectangle's middle, its first convex corner); until the user moves
 * one, each run keeps its own default for it.
 */
export class CutPanel {
  choice: CutChoice = { ...DEFAULT_CHOICE };
  private readonly values = { yUm: 0, xUm: 0, corner: '' };

  constructor(private readonly folder: GUI, private readonly changed: () => void) {
    folder.hide();
  }

  /** Whether the folder offers a 3D run's cuts. */
  get shown(): boolean {
    return !this.folder._hidden;
  }

  /** Offers the cuts of the first 3D run among `runs` (hidden when there is none) and goes back to the defaults. */
  setRuns(runs: readonly RunData[]): void {
    const folder = this.folder;
    for (const c of [...folder.controllers]) c.destroy();
    this.choice = { ...DEFAULT_CHOICE };
    const run = runs.find(isVolumeRun);
    if (!run) {
      folder.hide();
      return;
    }
    folder.show();
    const cs = run.report.crossSection;
    const lengthUm = cs.lengthUm ?? cs.widthUm;
    const cuts = chosenCuts(run.report, this.choice);
    for (const c of cuts) {
      if (c.kind === 'x') this.values.yUm = c.yUm;
      if (c.kind === 'y') this.values.xUm = c.xUm;
      if (c.kind === 'diagonal') this.values.corner = `${c.rectangle}:${c.corner}`;
    }
    folder.add(this.values, 'yUm', 0, lengthUm, 0.01).name('cut along x at y, µm').onFinishChange((v: number) => this.set({ xCutAtYUm: v }));
    folder.add(this.values, 'xUm', 0, cs.widthUm, 0.01).name('cut along y at x, µm').onFinishChange((v: number) => this.set({ yCutAtXUm: v }));
    const corners = outlineCorners(run.report);
    if (corners.length > 0) {
      const options = Object.fromEntries(corners.map((c) => [cornerLabel(c.rectangle, c.corner, c.kind), `${c.rectangle}:${c.corner}`]));
      folder.add(this.values, 'corner', options).name('diagonal through').onChange((v: string) => {
        const [k, name] = v.split(':');
        if (CORNER_NAMES.includes(name as CornerName)) this.set({ corner: { rectangle: Number(k), corner: name as CornerName } });
      });
    }
  }

  /** Sets part of the choice (from the panel or from code) and shows the new cuts. */
  set(part: Partial<CutChoice>): void {
    this.choice = { ...this.choice, ...part };
    if (part.xCutAtYUm !== undefined && part.xCutAtYUm !== null) this.values.yUm = part.xCutAtYUm;
    if (part.yCutAtXUm !== undefined && part.yCutAtXUm !== null) this.values.xUm = part.yCutAtXUm;
    if (part.corner) this.values.corner = `${part.corner.rectangle}:${part.corner.corner}`;
    for (const c of this.folder.controllers) c.updateDisplay();
    this.changed();
  }
}
