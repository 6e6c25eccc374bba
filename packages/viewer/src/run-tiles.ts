import type { RunData } from './load.ts';
import { sectionRuns, type CutChoice } from './sections3d.ts';
import type { Tile } from './tile.ts';

/**
 * The tiles of the loaded runs and of the live re-run, in that order: a 2D run is one tile,
 * a 3D run its plan view and cuts (sections3d.ts). Tiles it replaces free their GPU memory.
 */
export class RunTiles {
  private loaded: Tile[] = [];
  private live: Tile[] = [];
  private liveRun: RunData | null = null;

  constructor(private readonly make: (run: RunData) => Tile) {}

  get all(): Tile[] {
    return [...this.loaded, ...this.live];
  }

  isLive(tile: Tile): boolean {
    return this.live.includes(tile);
  }

  /** A new data set: every old tile goes, the live one too. */
  load(runs: readonly RunData[], choice: CutChoice): Tile[] {
    for (const t of this.all) t.dispose();
    this.loaded = sectionRuns(runs, choice).map(this.make);
    this.live = [];
    this.liveRun = null;
    return this.all;
  }

  /** The cuts moved: every section is made anew; 2D tiles stay. */
  recut(runs: readonly RunData[], choice: CutChoice): Tile[] {
    const kept = new Map(this.loaded.filter((t) => !t.run.section).map((t) => [t.run, t]));
    for (const t of this.loaded) if (t.run.section) t.dispose();
    this.loaded = sectionRuns(runs, choice).map((r) => kept.get(r) ?? this.make(r));
    return this.liveRun && this.live.some((t) => t.run.section) ? this.setLive(this.liveRun, choice) : this.all;
  }

  /** The live run's tiles in place of the last ones. */
  setLive(run: RunData, choice: CutChoice): Tile[] {
    for (const t of this.live) t.dispose();
    this.liveRun = run;
    this.live = sectionRuns([run], choice).map(this.make);
    return this.all;
  }
}
