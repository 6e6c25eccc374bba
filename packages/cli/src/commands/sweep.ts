import { existsSync, statSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { basename, extname, join, resolve } from 'node:path';
import { parseArgs } from 'node:util';
import { parseRecipe, type PlanLimits } from '@edgewise/solver2d';
import { UsageError } from '../errors.ts';
import { HELP_OPTION, type CommandSpec } from '../help.ts';
import { inside, makeFolders, outFolder } from '../files.ts';
import { fmtLength, fmtPlusMinus, fmtRatio, fmtSci, table } from '../format.ts';
import { LIMIT_OPTIONS, LIMITS_USAGE, parseLimits } from '../limits.ts';
import { drawsOnTerminal, progressReporter } from '../progress.ts';
import { readRecipeFile } from '../read-recipe.ts';
import { ERROR_SOLVES_OPTION, parseErrorSolves, QUIET_OPTION } from './run.ts';
import type { RunRow } from '../sweep/csv.ts';
import { buildMatrix, recipeForRun, type SweepMatrix, type SweepRun } from '../sweep/matrix.ts';
import { workerBundle, WorkerPool } from '../sweep/pool.ts';
import { SWEEP_SCHEMA_ID, writeSweepFiles, type SweepDocument } from '../sweep/record.ts';
import { finishedRun, removeStaleTemps } from '../sweep/resume.ts';
import { indexedJobManifest, planSummary, slurmScript, type PlanRequest } from '../sweep/plan.ts';
import { removeStaleRunFolders, someNames } from '../sweep/stale.ts';
import { inShard, parseShard, parseShardCount, shardFromEnvironment, sweepStem, type Shard } from '../sweep/shard.ts';
import type { ErrorSolves } from '../sweep/task.ts';

export const SWEEP_USAGE =
  'edgewise sweep RECIPE [--widths RANGE] [--set PATH=VALUES]… [--out DIR] [--jobs N] [--error-solves 0|1|2] [--resume] [--shard K/N|auto [--shards N]] ' +
  `${LIMITS_USAGE} [--quiet] [--plan [--shards N] [--scheduler slurm|kubernetes]]`;

/** Exit codes beyond main.ts's 0 (ok), 1 (internal failure) and 2 (bad input). */
export const EXIT_RUNS_FAILED = 3;
export const EXIT_INTERRUPTED = 130;
export const EXIT_TERMINATED = 143;

export const MAX_JOBS = 256;
/** The shards a plan splits into when --shards is not given: one a run, at most this many. */
export const DEFAULT_PLAN_SHARDS = 10;
/** sweep.csv and sweep.json are rewritten at most this often while runs finish. */
const RECORD_EVERY_MS = 1000;

export const SWEEP_SPEC = {
  usage: SWEEP_USAGE,
  summary: 'Runs a batch of a recipe over window widths and any recipe values (a cartesian product of the parameters), in worker threads, and writes sweep.csv (one row per run, every per-window number with its error bar), sweep.json and one run folder per run. Exit codes: 0 every run ok, 2 bad input (nothing written), 3 some runs failed, 130 Ctrl-C, 143 SIGTERM.',
  arguments: [['RECIPE', 'the recipe file: JSON, or YAML for .yaml/.yml; its own `sweep` key adds parameters (a flag replaces the same parameter)']],
  options: {
    widths: { type: 'string', value: 'RANGE', help: 'resize every window about its centre to each width, µm: a range start:step:stop, a list 1,2,4 or one number', defaultText: "the recipe's sweep.widthsUm, or no width parameter" },
    set: { type: 'string', multiple: true, default: [], value: 'PATH=VALUES', help: "sweep any numeric field of the recipe, named by its path ('steps[1].minutes=30,60,120', 'mesh.refine=1,2'); values as for --widths", defaultText: "the recipe's sweep.set" },
    out: { type: 'string', value: 'DIR', help: 'the folder to write sweep.csv, sweep.json and the run folders into', defaultText: 'out/<recipe file name>-sweep/' },
    jobs: { type: 'string', value: 'N', help: `worker threads, 1 to ${MAX_JOBS} (with --plan: the cores each task asks for)`, defaultText: 'one per core; 1 with --plan' },
    ...ERROR_SOLVES_OPTION,
    resume: { type: 'boolean', default: false, help: 'skip every run whose folder already holds a finished run of the same recipe and error settings', defaultText: 'off: every run is solved' },
    shard: { type: 'string', value: 'K/N|auto', help: "run only the K-th of N slices (runs K, K+N, …) and write sweep-shard-K-of-N.*; auto takes K and N from a Slurm array or a Kubernetes indexed job", defaultText: 'the whole sweep' },
    shards: { type: 'string', value: 'N', help: 'the shard count: with --shard auto, for a Kubernetes indexed job; with --plan, the split', defaultText: `with --plan, one shard a run, at most ${DEFAULT_PLAN_SHARDS}` },
    plan: { type: 'boolean', default: false, help: 'build and check every run, write nothing, and print the split and the Slurm and Kubernetes files that run the shards and merge them', defaultText: 'off' },
    scheduler: { type: 'string', value: 'slurm|kubernetes', help: 'with --plan, print only that scheduler\'s file', defaultText: 'both' },
    ...QUIET_OPTION,
    ...LIMIT_OPTIONS,
    ...HELP_OPTION,
  },
} as const satisfies CommandSpec;

export function defaultSweepFolder(recipePath: string): string {
  return join('out', `${basename(recipePath, extname(recipePath))}-sweep`);
}

function parseJobs(text: string | undefined): number {
  if (text === undefined) return availableParallelism();
  const n = /^\s*\d+\s*$/.test(text) ? Number(text) : NaN;
  if (!(n >= 1 && n <= MAX_JOBS)) throw new UsageError(`--jobs ${JSON.stringify(text)}: expected a whole number from 1 to ${MAX_JOBS} (worker threads; default: the number of cores, ${availableParallelism()})`);
  return n;
}

function errorText(e: unknown): string {
  const err = e as { name?: string; message?: string };
  const message = (err.message ?? String(e)).split('\n')[0];
  return err.name && err.name !== 'Error' && !message.startsWith(err.name) ? `${err.name}: ${message}` : message;
}

export async function sweepCommand(args: string[]): Promise<number> {
  const { values, positionals } = parseArgs({ args, allowPositionals: true, strict: true, options: SWEEP_SPEC.options });
  if (positionals.length !== 1) throw new UsageError(`sweep takes one recipe file (usage: ${SWEEP_USAGE})`);
  const recipePath = positionals[0];
  const jobs = parseJobs(values.jobs);
  const errorSolves = parseErrorSolves(values['error-solves'], 'per run');
  const limits = parseLimits(values);
  const shards = parseShardCount(values.shards);
  if (values.plan) return planCommand(recipePath, values, shards);
  if (values.scheduler !== undefined) throw new UsageError('--scheduler goes with --plan (it picks the file the plan prints)');
  const auto = values.shard?.trim() === 'auto';
  if (shards !== null && !auto) throw new UsageError('--shards N goes with --shard auto (the count of a Kubernetes indexed job) or with --plan');
  const shard = values.shard === undefined ? null : auto ? shardFromEnvironment(process.env, shards) : parseShard(values.shard);
  const out = outFolder(values.out, defaultSweepFolder(recipePath));
  if (existsSync(out) && !statSync(out).isDirectory()) throw new UsageError(`--out ${out}: is a file, not a folder`);
  // The workers start now and load the solver while every run is planned below; on bad
  // input they are stopped before the error is reported.
  const pool = new WorkerPool(jobs, workerBundle());
  try {
    // Every run is built and validated here; nothing is written before this line succeeds.
    const matrix = buildMatrix(await readRecipeFile(recipePath), { widths: values.widths, set: values.set, limits });
    return await runSweep(matrix, pool, { out, jobs, errorSolves, shard, resume: values.resume, quiet: values.quiet, limits });
  } finally {
    await pool.close();
  }
}

/**
 * `--plan`: every run is built and checked as for a sweep, then the split and the scheduler
 * files are printed; nothing is written and no run starts.
 */
async function planCommand(recipePath: string, values: Record<string, string | string[] | boolean | undefined>, shards: number | null): Promise<number> {
  const scheduler = values.scheduler as string | undefined;
  if (scheduler !== undefined && scheduler !== 'slurm' && scheduler !== 'kubernetes') {
    throw new UsageError(`--scheduler ${JSON.stringify(scheduler)}: expected slurm or kubernetes`);
  }
  if (values.shard !== undefined || values.resume) throw new UsageError('--plan prints the commands that run the shards; leave out --shard and --resume');
  const limits = parseLimits(values as Parameters<typeof parseLimits>[0]);
  const jobs = values.jobs === undefined ? 1 : parseJobs(values.jobs as string);
  if (values['error-solves'] !== undefined) parseErrorSolves(values['error-solves'] as string, 'per run');
  const widths = values.widths as string | undefined;
  const set = values.set as string[];
  const matrix = buildMatrix(await readRecipeFile(recipePath), { widths, set, limits });
  const sweepArgs = [resolve(recipePath)];
  if (widths !== undefined) sweepArgs.push('--widths', widths);
  for (const s of set) sweepArgs.push('--set', s);
  for (const option of ['error-solves', 'max-mesh-points', 'max-point-steps']) {
    if (values[option] !== undefined) sweepArgs.push(`--${option}`, values[option] as string);
  }
  const request: PlanRequest = {
    matrix, shards: shards ?? Math.min(matrix.runs.length, DEFAULT_PLAN_SHARDS), jobs,
    cwd: process.cwd(), launcher: [process.execPath, resolve(process.argv[1])], sweepArgs,
    out: resolve((values.out as string | undefined) ?? defaultSweepFolder(recipePath)),
  };
  if (scheduler === 'slurm') process.stdout.write(slurmScript(request));
  else if (scheduler === 'kubernetes') process.stdout.write(indexedJobManifest(request));
  else {
    process.stdout.write(`${planSummary(request)}\n\n` +
      `# ---- Slurm: save as a file and run it with bash (or print it alone with --scheduler slurm) ----\n${slurmScript(request)}\n` +
      `# ---- Kubernetes: save as a file for kubectl (or print it alone with --scheduler kubernetes) ----\n${indexedJobManifest(request)}`);
  }
  return 0;
}

interface SweepOptions {
  out: string;
  jobs: number;
  errorSolves: ErrorSolves;
  shard: Shard | null;
  resume: boolean;
  quiet: boolean;
  limits: PlanLimits;
}

async function runSweep(matrix: SweepMatrix, pool: WorkerPool, options: SweepOptions): Promise<number> {
  const { out, shard } = options;
  const started = performance.now();
  const mine = matrix.runs.filter((r) => inShard(r.id, shard));
  const stem = sweepStem(shard);
  // A run folder that leads outside --out (a symbolic link) is refused before anything is written.
  const folders = new Map(mine.map((r) => [r.id, inside(out, r.dir)]));
  makeFolders(out);
  removeStaleTemps(out, [`${stem}.csv`, `${stem}.json`]);
  const stale = removeStaleRunFolders(out, new Set(matrix.runs.map((r) => r.dir)), shard);

  const { rows, toDo, reused } = initialRows(mine, folders, options);
  const record = () => {
    const ordered = mine.map((r) => rows.get(r.id)!);
    const doc: SweepDocument = {
      schema: SWEEP_SCHEMA_ID, title: matrix.title,
      parameters: matrix.parameters.map((p) => p.name), windows: matrix.windows, ...(matrix.rectangles ? { rectangles: true } : {}),
      ...(matrix.electricalBiases ? { electricalBiases: matrix.electricalBiases } : {}),
      total: matrix.runs.length, shard, sweepSha256: matrix.sweepSha256, errorSolves: options.errorSolves,
      runs: mine.map((r, k) => ({
        id: r.id, dir: r.dir, values: r.values, status: ordered[k].status, error: ordered[k].error, recipeSha256: r.recipeSha256,
      })),
    };
    return writeSweepFiles(out, stem, doc, ordered);
  };
  record();

  let failed = 0;
  let finished = 0;
  const warnings: string[] = [];
  if (stale.removed.length > 0 && !options.quiet) {
    process.stderr.write(`sweep: removed ${stale.removed.length} run folder${stale.removed.length === 1 ? '' : 's'} of an earlier sweep that this one does not make: ${someNames(stale.removed)}\n`);
  }
  if (stale.kept.length > 0) {
    process.stderr.write(`warning: ${out} holds ${stale.kept.length} run folder${stale.kept.length === 1 ? '' : 's'} that this sweep does not make, with files of other names or leading elsewhere, left as they are: ${someNames(stale.kept)}\n`);
  }
  const progress = progressReporter(options.quiet ? null : process.stderr, 'sweep');
  await pool.shrink(Math.min(options.jobs, toDo.length));
  const report = () => progress.update(
    toDo.length === 0 ? 1 : (finished + pool.runningFraction()) / toDo.length,
    `${reused + finished}/${mine.length} runs, ${failed} failed`,
  );
  const say = (line: string) => {
    if (!options.quiet) process.stderr.write(`${drawsOnTerminal(process.stderr) ? '\r\x1b[K' : ''}${line}\n`);
  };
  const signals = new StopSignals(pool, say);
  const ticker = setInterval(report, 250);
  ticker.unref();

  // Largest runs first (longest-processing-time order), so that no long run starts last and
  // leaves the other workers idle at the end; ids, folders and the table keep sweep order.
  toDo.sort((a, b) => b.meshPoints - a.meshPoints || a.id - b.id);
  let lastRecord = performance.now();
  let next = 0;
  const lane = async (currentPool: WorkerPool) => {
    while (signals.stopping === null && next < toDo.length) {
      const run = toDo[next++];
      const recipe = recipeForRun(matrix.base, matrix.parameters, run.values);
      const row = rows.get(run.id)!;
      try {
        const outcome = await currentPool.run({ id: run.id, out: resolve(out), dir: run.dir, recipe: parseRecipe(recipe), recipeText: `${JSON.stringify(recipe, null, 2)}\n`, errorSolves: options.errorSolves, limits: options.limits });
        row.windows = outcome.windows;
        row.status = 'ok';
        for (const w of outcome.warnings) warnings.push(`run ${run.id}: ${w}`);
      } catch (e) {
        if (signals.abandoning && (e as Error).name === 'StoppedError') {
          row.status = 'abandoned';
          row.error = `abandoned: the sweep was stopped by ${signals.stopping}`;
        } else {
          row.status = 'failed';
          row.error = errorText(e);
          failed++;
        }
      }
      finished++;
      report();
      if (performance.now() - lastRecord > RECORD_EVERY_MS) {
        record();
        lastRecord = performance.now();
      }
    }
  };
  try {
    await Promise.all(Array.from({ length: pool.size }, () => lane(pool)));
  } finally {
    clearInterval(ticker);
    signals.release();
    progress.done();
    await pool.close();
  }
  const written = record();

  const ordered = mine.map((r) => rows.get(r.id)!);
  return closeSweep(matrix, options, ordered, { written, stem, reused, failed, started, stopping: signals.stopping, warnings, workers: pool.size });
}


/** Ctrl-C stops new runs and a second one abandons the running ones; SIGTERM abandons at once. */
class StopSignals {
  stopping: 'SIGINT' | 'SIGTERM' | null = null;
  abandoning = false;
  private readonly onInt = () => {
    if (this.stopping === null) {
      this.stopping = 'SIGINT';
      this.say('sweep: stopping — no new runs start; the running ones finish (Ctrl-C again to abandon them)');
    } else if (!this.abandoning) {
      this.abandoning = true;
      this.pool.abandon();
      this.say('sweep: abandoning the running runs');
    }
  };
  private readonly onTerm = () => {
    this.stopping ??= 'SIGTERM';
    this.abandoning = true;
    this.pool.abandon();
  };

  constructor(private readonly pool: WorkerPool, private readonly say: (line: string) => void) {
    process.on('SIGINT', this.onInt);
    process.on('SIGTERM', this.onTerm);
  }

  release(): void {
    process.off('SIGINT', this.onInt);
    process.off('SIGTERM', this.onTerm);
  }
}

/** Each run of this shard as a row: `ok` where --resume finds it finished, else pending (and to do). */
function initialRows(mine: SweepRun[], folders: Map<number, string>, options: SweepOptions): { rows: Map<number, RunRow>; toDo: SweepRun[]; reused: number } {
  const rows = new Map<number, RunRow>();
  const toDo: SweepRun[] = [];
  let reused = 0;
  for (const run of mine) {
    const folder = folders.get(run.id)!;
    removeStaleTemps(folder, null);
    const windows = options.resume ? finishedRun(folder, run.recipeSha256, options.errorSolves) : null;
    if (windows) {
      rows.set(run.id, { id: run.id, values: run.values, windows, status: 'ok', error: null });
      reused++;
    } else {
      rows.set(run.id, { id: run.id, values: run.values, windows: null, status: 'pending', error: null });
      toDo.push(run);
    }
  }
  return { rows, toDo, reused };
}

/** How a sweep ended: the table, the failures and a summary; returns the exit code. */
function closeSweep(matrix: SweepMatrix, options: SweepOptions, ordered: RunRow[], end: {
  written: string[]; stem: string; reused: number; failed: number; started: number;
  stopping: 'SIGINT' | 'SIGTERM' | null; warnings: string[]; workers: number;
}): number {
  const { out, shard } = options;
  const { written, stem, reused, failed, started, stopping, warnings } = end;
  const count = (s: RunRow['status']) => ordered.filter((r) => r.status === s).length;
  const seconds = (performance.now() - started) / 1000;
  process.stdout.write(`${summaryTable(matrix, ordered)}\n`);
  for (const r of ordered) if (r.status === 'failed') process.stdout.write(`run ${r.id} failed: ${r.error}\n`);
  process.stdout.write(`wrote ${out}/: ${written.join(', ')} and ${count('ok')} run folder${count('ok') === 1 ? '' : 's'}\n`);
  if (!options.quiet) {
    if (warnings.length > 0) {
      process.stderr.write(`warning: ${warnings.length} warning${warnings.length === 1 ? '' : 's'} from the runs (each run's report.json lists its own); the first: ${warnings[0]}\n`);
    }
    const shardNote = shard ? ` (shard ${shard.index}/${shard.count} of ${matrix.runs.length})` : '';
    process.stderr.write(`sweep: ${ordered.length} runs${shardNote}: ${count('ok')} ok${reused ? ` (${reused} already finished)` : ''}, ${failed} failed, ` +
      `${count('abandoned')} abandoned, ${count('pending')} not run; ${seconds.toFixed(1)} s with ${end.workers} worker${end.workers === 1 ? '' : 's'}\n`);
  }
  if (stopping) {
    process.stderr.write(`sweep: stopped by ${stopping}; run the same command with --resume to finish it\n`);
    return stopping === 'SIGINT' ? EXIT_INTERRUPTED : EXIT_TERMINATED;
  }
  if (failed > 0) {
    process.stderr.write(`sweep: ${failed} of ${ordered.length} runs failed (see the error column of ${stem}.csv)\n`);
    return EXIT_RUNS_FAILED;
  }
  return 0;
}


/** One line per run (per window when there are several), the swept values first. */
function summaryTable(matrix: SweepMatrix, rows: readonly RunRow[]): string {
  const names = matrix.parameters.map((p) => p.name);
  if (matrix.rectangles) {
    // 3D: per rectangle the depth, the mean edge reach and the smallest and largest corner reach.
    const header = ['run', ...names, 'rect', 'xj µm', 'edges µm', 'corners µm', 'status'];
    const body: string[][] = [];
    const span = (vs: (number | null | undefined)[]) => {
      const v = vs.filter((x): x is number => typeof x === 'number');
      if (v.length === 0) return '—';
      const lo = Math.min(...v);
      const hi = Math.max(...v);
      return lo === hi ? fmtLength(lo) : `${fmtLength(lo)}–${fmtLength(hi)}`;
    };
    for (const r of rows) {
      for (let k = 0; k < matrix.windows; k++) {
        const w = r.windows?.[k];
        body.push([
          String(r.id), ...names.map((n) => String(r.values[n])), String(k + 1),
          fmtPlusMinus(w?.junctionDepthUm ?? null, w?.errors?.junctionDepthUm),
          span([w?.edgeLeftUm, w?.edgeRightUm, w?.edgeBottomUm, w?.edgeTopUm]),
          span([w?.cornerBottomLeftUm, w?.cornerBottomRightUm, w?.cornerTopLeftUm, w?.cornerTopRightUm]), r.status,
        ]);
      }
    }
    return table(header, body);
  }
  const several = matrix.windows > 1;
  const header = ['run', ...names, ...(several ? ['window'] : []), 'xj µm', 'lateral L µm', 'lateral R µm', 'lateral/xj', 'surface cm^-3', 'status'];
  const body: string[][] = [];
  for (const r of rows) {
    for (let k = 0; k < matrix.windows; k++) {
      const w = r.windows?.[k];
      body.push([
        String(r.id), ...names.map((n) => String(r.values[n])), ...(several ? [String(k + 1)] : []),
        fmtPlusMinus(w?.junctionDepthUm ?? null, w?.errors?.junctionDepthUm), fmtPlusMinus(w?.lateralLeftUm ?? null, w?.errors?.lateralLeftUm),
        fmtPlusMinus(w?.lateralRightUm ?? null, w?.errors?.lateralRightUm),
        fmtRatio(w?.lateralToVerticalRatio ?? null), typeof w?.surfaceConcentrationCm3 === 'number' ? fmtSci(w.surfaceConcentrationCm3) : '—', r.status,
      ]);
    }
  }
  return table(header, body);
}
