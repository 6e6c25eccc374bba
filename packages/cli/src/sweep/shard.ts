import { UsageError } from '../errors.ts';

export interface Shard {
  /** 1-based */
  index: number;
  count: number;
}

export const MAX_SHARDS = 10_000;

export function parseShard(text: string): Shard {
  const m = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(text);
  const count = m ? Number(m[2]) : NaN;
  const index = m ? Number(m[1]) : NaN;
  if (!m || count < 1 || count > MAX_SHARDS || index < 1 || index > count) {
    throw new UsageError(`--shard ${JSON.stringify(text)}: expected K/N with N from 1 to ${MAX_SHARDS} and K from 1 to N (e.g. 2/8)`);
  }
  return { index, count };
}

/**
 * Shard K of N takes runs K, K+N, K+2N, … (1-based ids). Dealing runs out in turn rather than
 * in blocks gives every shard a like mix of small and large windows, so the slices take
 * about the same time.
 */
export function inShard(id: number, shard: Shard | null): boolean {
  return shard === null || (id - 1) % shard.count === shard.index - 1;
}

/** File name stem of a sweep's table and index: `sweep`, or `sweep-shard-2-of-8` for a slice. */
export function sweepStem(shard: Shard | null): string {
  return shard === null ? 'sweep' : `sweep-shard-${shard.index}-of-${shard.count}`;
}

export const SHARD_FILE = /^sweep-shard-(\d+)-of-(\d+)\.json$/;

/** The environment a task runs in (process.env, or a test's own). */
export type Environment = Readonly<Record<string, string | undefined>>;

/**
 * Variable of our own that an indexed-job manifest sets to its completions, so that a task
 * knows how many shards there are (Kubernetes gives each pod its index, not the count).
 */
export const SHARD_COUNT_VARIABLE = 'EDGEWISE_SHARD_COUNT';

const SLURM = ['SLURM_ARRAY_TASK_ID', 'SLURM_ARRAY_TASK_MIN', 'SLURM_ARRAY_TASK_COUNT'] as const;
const INDEXED = 'JOB_COMPLETION_INDEX';

/** `--shards N`: a whole number from 1 to MAX_SHARDS, or null when not given. */
export function parseShardCount(text: string | undefined, option = '--shards'): number | null {
  if (text === undefined) return null;
  const n = /^\s*\d+\s*$/.test(text) ? Number(text) : NaN;
  if (!(n >= 1 && n <= MAX_SHARDS)) throw new UsageError(`${option} ${JSON.stringify(text)}: expected a whole number of shards from 1 to ${MAX_SHARDS}`);
  return n;
}

/** A variable that must hold a whole number; its name and text in the error. */
function wholeVariable(env: Environment, name: string): number {
  const text = env[name] ?? '';
  if (!/^\s*\d+\s*$/.test(text) || !Number.isSafeInteger(Number(text))) {
    throw new UsageError(`--shard auto: ${name}=${JSON.stringify(text)}: expected a whole number (0 or more)`);
  }
  return Number(text);
}

/**
 * `--shard auto`: shard K of N from the scheduler's environment.
 * - A Slurm job array (`sbatch --array=A-B` or `A-B:S`): task SLURM_ARRAY_TASK_ID of an array
 *   starting at SLURM_ARRAY_TASK_MIN with SLURM_ARRAY_TASK_COUNT tasks, SLURM_ARRAY_TASK_STEP
 *   apart (1 when unset); the first task is shard 1 whatever number the range starts at.
 * - A Kubernetes indexed job: JOB_COMPLETION_INDEX (0-based), with the count from `--shards N`
 *   or EDGEWISE_SHARD_COUNT (the job's completions).
 * `--shards N`, when given, must agree with a Slurm array's count.
 */
export function shardFromEnvironment(env: Environment, shards: number | null): Shard {
  const slurm = env.SLURM_ARRAY_TASK_ID !== undefined;
  const indexed = env[INDEXED] !== undefined;
  if (slurm && indexed) {
    throw new UsageError(`--shard auto: both SLURM_ARRAY_TASK_ID and ${INDEXED} are set, so the scheduler is not clear; give --shard K/N`);
  }
  if (slurm) {
    const missing = SLURM.filter((name) => env[name] === undefined || env[name]!.trim() === '');
    if (missing.length > 0) {
      throw new UsageError(`--shard auto: ${missing.join(' and ')} ${missing.length === 1 ? 'is' : 'are'} not set (Slurm sets ${SLURM.join(', ')} in every task of a job array)`);
    }
    const id = wholeVariable(env, 'SLURM_ARRAY_TASK_ID');
    const min = wholeVariable(env, 'SLURM_ARRAY_TASK_MIN');
    const count = wholeVariable(env, 'SLURM_ARRAY_TASK_COUNT');
    const step = env.SLURM_ARRAY_TASK_STEP === undefined ? 1 : wholeVariable(env, 'SLURM_ARRAY_TASK_STEP');
    const max = env.SLURM_ARRAY_TASK_MAX === undefined ? null : wholeVariable(env, 'SLURM_ARRAY_TASK_MAX');
    const range = `SLURM_ARRAY_TASK_MIN=${min}, SLURM_ARRAY_TASK_MAX=${max ?? '(unset)'}, SLURM_ARRAY_TASK_STEP=${step}, SLURM_ARRAY_TASK_COUNT=${count}`;
    if (count < 1 || count > MAX_SHARDS || step < 1 || (max !== null && min + (count - 1) * step !== max)) {
      throw new UsageError(`--shard auto: the job array is not one range of 1 to ${MAX_SHARDS} tasks (${range}); submit it with --array=A-B or A-B:STEP`);
    }
    const offset = id - min;
    if (offset < 0 || offset % step !== 0 || offset / step >= count) {
      throw new UsageError(`--shard auto: SLURM_ARRAY_TASK_ID=${id} is not a task of the array (${range})`);
    }
    if (shards !== null && shards !== count) {
      throw new UsageError(`--shard auto: --shards ${shards} does not match the job array's SLURM_ARRAY_TASK_COUNT=${count}; leave --shards out or submit --array with ${shards} tasks`);
    }
    return { index: offset / step + 1, count };
  }
  if (indexed) {
    const index = wholeVariable(env, INDEXED);
    const count = shards ?? (env[SHARD_COUNT_VARIABLE] === undefined ? null : parseShardCount(env[SHARD_COUNT_VARIABLE], SHARD_COUNT_VARIABLE));
    if (count === null) {
      throw new UsageError(`--shard auto: ${INDEXED} is set (a Kubernetes indexed job) but not the number of shards: give --shards N or set ${SHARD_COUNT_VARIABLE} to the job's completions`);
    }
    if (index >= count) {
      throw new UsageError(`--shard auto: ${INDEXED}=${index} is not below the ${count} shards (it counts from 0 to completions − 1)`);
    }
    return { index: index + 1, count };
  }
  throw new UsageError(`--shard auto: no scheduler task found: neither SLURM_ARRAY_TASK_ID (a Slurm job array) nor ${INDEXED} (a Kubernetes indexed job) is set; give --shard K/N outside a scheduler`);
}
