import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import * as Comlink from 'comlink';
import nodeEndpoint from 'comlink/dist/umd/node-adapter.js';
import { CONTROL_BYTES, PROGRESS_OFFSET, STOP_INDEX, type RunOutcome, type RunTask, type RunWorkerApi } from './task.ts';

/**
 * The worker bundle. bin/edgewise.mjs bundles src/main.ts to dist/main.mjs and
 * src/sweep/run.worker.ts to dist/sweep/run.worker.mjs; inside the bundle this module's URL
 * is that of dist/main.mjs.
 */
export function workerBundle(): URL {
  const candidates = [new URL('./sweep/run.worker.mjs', import.meta.url), new URL('./run.worker.mjs', import.meta.url)];
  const found = candidates.find((u) => u.protocol === 'file:' && existsSync(fileURLToPath(u)));
  if (!found) throw new Error(`no sweep worker bundle beside ${import.meta.url}; run edgewise through packages/cli/bin/edgewise.mjs, which builds it`);
  return found;
}

interface Slot {
  worker: Worker;
  api: Comlink.Remote<RunWorkerApi>;
  stop: Int32Array;
  progress: Float64Array;
  busy: boolean;
  /** rejects when the worker thread ends or crashes */
  death: Promise<never>;
  dead: boolean;
}

/**
 * A fixed number of worker threads, each running one run at a time through comlink. A worker
 * that dies (out of memory, a crash) fails only its own run and is replaced.
 */
export class WorkerPool {
  private readonly slots: Slot[] = [];
  private readonly waiting: ((slot: Slot) => void)[] = [];
  private abandoned = false;
  private closed = false;

  constructor(count: number, private readonly url: URL) {
    for (let k = 0; k < count; k++) this.slots.push(this.spawn());
  }

  get size(): number {
    return this.slots.length;
  }

  /**
   * Stops the workers beyond the first `count`, before any run is given (a sweep with fewer
   * runs to do than workers started).
   */
  async shrink(count: number): Promise<void> {
    await Promise.all(this.slots.splice(Math.max(0, count)).map(stopWorker));
  }

  private spawn(): Slot {
    const control = new SharedArrayBuffer(CONTROL_BYTES);
    const stop = new Int32Array(control, 0, 1);
    if (this.abandoned) Atomics.store(stop, STOP_INDEX, 1);
    const worker = new Worker(this.url, { workerData: { control } });
    const slot = { worker, stop, progress: new Float64Array(control, PROGRESS_OFFSET, 1), busy: false, dead: false } as Slot;
    slot.api = Comlink.wrap<RunWorkerApi>(nodeEndpoint(worker));
    slot.death = new Promise<never>((_, reject) => {
      worker.once('error', (e) => {
        slot.dead = true;
        reject(new Error(`the worker thread failed: ${e.message}`));
      });
      worker.once('exit', (code) => {
        slot.dead = true;
        reject(new Error(`the worker thread stopped (exit code ${code})`));
      });
    });
    slot.death.catch(() => {});
    return slot;
  }

  private acquire(): Promise<Slot> {
    const free = this.slots.find((s) => !s.busy);
    if (free) {
      free.busy = true;
      return Promise.resolve(free);
    }
    return new Promise((resolve) => this.waiting.push(resolve));
  }

  private release(slot: Slot): void {
    let s = slot;
    if (s.dead && !this.closed) {
      s = this.spawn();
      this.slots[this.slots.indexOf(slot)] = s;
    }
    const next = this.waiting.shift();
    if (next) {
      s.busy = true;
      next(s);
    } else {
      s.busy = false;
    }
  }

  async run(task: RunTask): Promise<RunOutcome> {
    if (this.closed) throw new Error('the worker pool is closed');
    const slot = await this.acquire();
    slot.progress[0] = 0;
    try {
      return await Promise.race([slot.api.run(task), slot.death]);
    } finally {
      slot.progress[0] = 0;
      this.release(slot);
    }
  }

  /** Sum of the fractions done of the runs in progress. */
  runningFraction(): number {
    let sum = 0;
    for (const s of this.slots) if (s.busy) sum += Math.min(1, Math.max(0, s.progress[0]));
    return sum;
  }

  /** Asks every running run to stop at its next time step; its promise rejects with a StoppedError. */
  abandon(): void {
    this.abandoned = true;
    for (const s of this.slots) Atomics.store(s.stop, STOP_INDEX, 1);
  }

  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    await Promise.all(this.slots.map(stopWorker));
  }
}

function stopWorker(s: Slot): Promise<number> {
  s.api[Comlink.releaseProxy]();
  return s.worker.terminate();
}
