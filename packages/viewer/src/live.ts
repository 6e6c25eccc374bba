import * as Comlink from 'comlink';
import type { LiveResult, SolverApi } from './solver.worker.ts';

/**
 * Live re-runs: the solver runs in a Web Worker; stopping a run ends that worker (the
 * solver checks for no message mid-run) and the next run starts a fresh one.
 */
export class LiveRunner {
  private worker: Worker | null = null;
  private api: Comlink.Remote<SolverApi> | null = null;
  private runId = 0;
  private cancel: (() => void) | null = null;

  private ensure(): Comlink.Remote<SolverApi> {
    if (!this.api) {
      this.worker = new Worker(new URL('./solver.worker.ts', import.meta.url), { type: 'module', name: 'edgewise-solver' });
      this.api = Comlink.wrap<SolverApi>(this.worker);
    }
    return this.api;
  }

  get running(): boolean {
    return this.runId > 0;
  }

  /** Runs a recipe; a newer run or stop() makes an older one reject with "stopped". */
  async run(recipe: unknown, onProgress: (fraction: number) => void): Promise<LiveResult> {
    if (this.runId > 0) this.stop();
    const id = ++this.runId;
    const api = this.ensure();
    const stopped = new Promise<never>((_, reject) => {
      this.cancel = () => reject(new Error('stopped'));
    });
    try {
      const result = await Promise.race([
        api.run(recipe, Comlink.proxy((done: number, total: number) => {
          if (id === this.runId) onProgress(total > 0 ? done / total : 1);
        })),
        stopped,
      ]);
      if (id !== this.runId) throw new Error('stopped');
      return result;
    } finally {
      if (id === this.runId) this.runId = 0;
    }
  }

  stop(): void {
    this.cancel?.();
    this.cancel = null;
    this.worker?.terminate();
    this.worker = null;
    this.api = null;
    this.runId = 0;
  }

  dispose(): void {
    this.stop();
  }
}
