import type GUI from 'lil-gui';
import { DEFAULT_RECIPE } from './default-recipe.ts';
import { LiveRunner } from './live.ts';
import { applyLiveFields, liveFields, type LiveField } from './live-params.ts';
import type { Problem, RunData } from './load.ts';

/** Run id of the live tile. */
export const LIVE_ID = 'live';

export interface LiveActions {
  /** a live run finished: show it as the live tile */
  show(run: RunData): void;
  /** the live run's problems changed (empty when it starts) */
  problems(problems: Problem[]): void;
}

export interface LiveElements {
  /** the header's progress bar: a <progress> and a <span> for its text */
  progress: HTMLElement;
  recipeInput: HTMLInputElement;
}

/**
 * The panel's "live re-run" folder: the editable values of the recipe (live-params.ts),
 * running it in the worker with progress, stopping it, and picking another recipe.
 */
export class LivePanel {
  private recipe: unknown = DEFAULT_RECIPE;
  private label = 'built-in demo recipe';
  private fields: LiveField[] = [];
  private readonly runner = new LiveRunner();
  readonly state = {
    status: 'idle',
    run: () => void this.run(),
    stop: () => this.stop(),
    pickRecipe: () => this.elements.recipeInput.click(),
  };

  constructor(private readonly folder: GUI, private readonly elements: LiveElements, private readonly actions: LiveActions) {
    this.build();
  }

  /** Where the recipe came from, as the panel shows it. */
  get recipeLabel(): string {
    return this.label;
  }

  setRecipe(recipe: unknown, label: string): void {
    this.recipe = recipe;
    this.label = label;
    this.build();
  }

  private build(): void {
    const folder = this.folder;
    for (const c of [...folder.controllers]) c.destroy();
    this.fields = liveFields(this.recipe);
    const values: Record<string, number | string> = {};
    for (const f of this.fields) {
      values[f.path] = f.value;
      const c = folder.add(values, f.path).name(f.label);
      c.onChange((v: number | string) => { f.value = v; });
      c.domElement.dataset.path = f.path;
    }
    folder.add(this.state, 'run').name('run in the background');
    folder.add(this.state, 'stop').name('stop');
    folder.add(this.state, 'pickRecipe').name('recipe from a file…');
    folder.add(this.state, 'status').name(this.label).disable().listen();
  }

  /** Runs the recipe as edited in the panel, in the worker; the result becomes the live tile. */
  async run(): Promise<void> {
    const recipe = applyLiveFields(this.recipe, this.fields);
    const bar = this.elements.progress;
    const meter = bar.querySelector('progress')!;
    const text = bar.querySelector('span')!;
    bar.hidden = false;
    meter.value = 0;
    text.textContent = 'solving… 0 %';
    this.state.status = 'solving';
    this.actions.problems([]);
    try {
      const result = await this.runner.run(recipe, (fraction) => {
        meter.value = fraction;
        text.textContent = `solving… ${Math.round(100 * fraction)} %`;
        this.state.status = `solving ${Math.round(100 * fraction)} %`;
      });
      this.actions.show({
        id: LIVE_ID, dir: '(live)', values: {}, report: result.report, x: result.x, z: result.z,
        field: result.field, layers: result.report.field.layers, ...(result.y ? { y: result.y } : {}),
      });
      this.state.status = `done in ${result.seconds.toFixed(2)} s`;
      text.textContent = `live run done in ${result.seconds.toFixed(2)} s`;
    } catch (e) {
      const message = (e as Error).message ?? String(e);
      this.state.status = message === 'stopped' ? 'stopped' : 'failed';
      text.textContent = message === 'stopped' ? 'live run stopped' : 'live run failed';
      if (message !== 'stopped') {
        const bad = (e as Error).name === 'RecipeError' ? 'the edited recipe' : 'the live run';
        this.actions.problems([{ file: `live: ${this.label}`, reason: `${bad}: ${message}` }]);
      }
    } finally {
      meter.value = 1;
      document.body.dataset.live = this.state.status;
    }
  }

  stop(): void {
    this.runner.stop();
  }
}
