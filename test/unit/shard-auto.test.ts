import { describe, expect, it } from 'vitest';
import { UsageError } from '../../packages/cli/src/errors.ts';
import { inShard, parseShardCount, shardFromEnvironment, type Environment } from '../../packages/cli/src/sweep/shard.ts';

/**
 * `--shard auto` from a scheduler's environment. The variables are the ones Slurm sets in
 * every task of a job array (sbatch(1), "OUTPUT ENVIRONMENT VARIABLES": SLURM_ARRAY_TASK_ID,
 * _MIN, _MAX, _COUNT, _STEP; observed in the real-Slurm test under test/cluster) and the one
 * Kubernetes sets in each pod of an indexed job (JOB_COMPLETION_INDEX, 0-based; Kubernetes
 * documentation, "Indexed Job for parallel processing with static work assignment").
 */

/** The environment of every task of `sbatch --array=MIN-MAX:STEP`, as Slurm sets it. */
function slurmArray(min: number, max: number, step = 1): Environment[] {
  const ids: number[] = [];
  for (let id = min; id <= max; id += step) ids.push(id);
  return ids.map((id) => ({
    SLURM_ARRAY_TASK_ID: String(id), SLURM_ARRAY_TASK_MIN: String(min), SLURM_ARRAY_TASK_MAX: String(ids[ids.length - 1]),
    SLURM_ARRAY_TASK_COUNT: String(ids.length), SLURM_ARRAY_TASK_STEP: String(step),
  }));
}

function refusal(env: Environment, shards: number | null = null): string {
  try {
    shardFromEnvironment(env, shards);
  } catch (e) {
    expect(e).toBeInstanceOf(UsageError);
    const message = (e as Error).message;
    expect(message.split('\n')).toHaveLength(1);
    return message;
  }
  throw new Error(`accepted ${JSON.stringify(env)}`);
}

describe('--shard auto on a Slurm job array', () => {
  for (const [min, max, step] of [[0, 9, 1], [1, 10, 1], [5, 7, 1], [1, 9, 2], [0, 0, 1]] as const) {
    it(`--array=${min}-${max}${step > 1 ? `:${step}` : ''}: the tasks are shards 1 to N in order, and together cover every run once`, () => {
      const tasks = slurmArray(min, max, step);
      const shards = tasks.map((env) => shardFromEnvironment(env, null));
      expect(shards).toEqual(tasks.map((_, k) => ({ index: k + 1, count: tasks.length })));
      // Every run id of a 23-run sweep falls in exactly one task's shard.
      for (let id = 1; id <= 23; id++) expect(shards.filter((s) => inShard(id, s))).toHaveLength(1);
    });
  }

  it('without SLURM_ARRAY_TASK_MAX and _STEP (older Slurm): the range comes from MIN and COUNT', () => {
    expect(shardFromEnvironment({ SLURM_ARRAY_TASK_ID: '12', SLURM_ARRAY_TASK_MIN: '10', SLURM_ARRAY_TASK_COUNT: '4' }, null)).toEqual({ index: 3, count: 4 });
  });

  it('--shards N that agrees with the array is accepted; one that does not is named', () => {
    const [, second] = slurmArray(1, 3);
    expect(shardFromEnvironment(second, 3)).toEqual({ index: 2, count: 3 });
    expect(refusal(second, 4)).toBe('--shard auto: --shards 4 does not match the job array\'s SLURM_ARRAY_TASK_COUNT=3; leave --shards out or submit --array with 4 tasks');
  });

  it('missing, empty or wrong variables: one line naming them', () => {
    expect(refusal({ SLURM_ARRAY_TASK_ID: '3' }))
      .toBe('--shard auto: SLURM_ARRAY_TASK_MIN and SLURM_ARRAY_TASK_COUNT are not set (Slurm sets SLURM_ARRAY_TASK_ID, SLURM_ARRAY_TASK_MIN, SLURM_ARRAY_TASK_COUNT in every task of a job array)');
    expect(refusal({ SLURM_ARRAY_TASK_ID: '3', SLURM_ARRAY_TASK_MIN: '1', SLURM_ARRAY_TASK_COUNT: ' ' }))
      .toMatch(/^--shard auto: SLURM_ARRAY_TASK_COUNT is not set \(/);
    expect(refusal({ SLURM_ARRAY_TASK_ID: 'x', SLURM_ARRAY_TASK_MIN: '1', SLURM_ARRAY_TASK_COUNT: '3' }))
      .toBe('--shard auto: SLURM_ARRAY_TASK_ID="x": expected a whole number (0 or more)');
    expect(refusal({ SLURM_ARRAY_TASK_ID: '2', SLURM_ARRAY_TASK_MIN: '-1', SLURM_ARRAY_TASK_COUNT: '3' }))
      .toBe('--shard auto: SLURM_ARRAY_TASK_MIN="-1": expected a whole number (0 or more)');
    // A task id outside the array, or off its step.
    expect(refusal({ ...slurmArray(1, 3)[0], SLURM_ARRAY_TASK_ID: '4' }))
      .toBe('--shard auto: SLURM_ARRAY_TASK_ID=4 is not a task of the array (SLURM_ARRAY_TASK_MIN=1, SLURM_ARRAY_TASK_MAX=3, SLURM_ARRAY_TASK_STEP=1, SLURM_ARRAY_TASK_COUNT=3)');
    expect(refusal({ ...slurmArray(1, 9, 2)[0], SLURM_ARRAY_TASK_ID: '2' })).toMatch(/^--shard auto: SLURM_ARRAY_TASK_ID=2 is not a task of the array/);
    expect(refusal({ ...slurmArray(1, 3)[0], SLURM_ARRAY_TASK_ID: '0' })).toMatch(/^--shard auto: SLURM_ARRAY_TASK_ID=0 is not a task of the array/);
  });

  it('an array given as a list (--array=1,3,7) has no one step: refused, since no task could tell its slice', () => {
    // Slurm sets MIN=1, MAX=7, COUNT=3 and no step that fits: 1 + 2·step ≠ 7 for step 1.
    expect(refusal({ SLURM_ARRAY_TASK_ID: '3', SLURM_ARRAY_TASK_MIN: '1', SLURM_ARRAY_TASK_MAX: '7', SLURM_ARRAY_TASK_COUNT: '3', SLURM_ARRAY_TASK_STEP: '1' }))
      .toBe('--shard auto: the job array is not one range of 1 to 10000 tasks (SLURM_ARRAY_TASK_MIN=1, SLURM_ARRAY_TASK_MAX=7, SLURM_ARRAY_TASK_STEP=1, SLURM_ARRAY_TASK_COUNT=3); submit it with --array=A-B or A-B:STEP');
    expect(refusal({ SLURM_ARRAY_TASK_ID: '1', SLURM_ARRAY_TASK_MIN: '1', SLURM_ARRAY_TASK_COUNT: '0' })).toMatch(/^--shard auto: the job array is not one range/);
  });
});

describe('--shard auto on a Kubernetes indexed job', () => {
  it('JOB_COMPLETION_INDEX 0 to N−1 are shards 1 to N, the count from --shards or EDGEWISE_SHARD_COUNT', () => {
    for (let k = 0; k < 4; k++) {
      expect(shardFromEnvironment({ JOB_COMPLETION_INDEX: String(k) }, 4)).toEqual({ index: k + 1, count: 4 });
      expect(shardFromEnvironment({ JOB_COMPLETION_INDEX: String(k), EDGEWISE_SHARD_COUNT: '4' }, null)).toEqual({ index: k + 1, count: 4 });
    }
    // --shards wins over the variable.
    expect(shardFromEnvironment({ JOB_COMPLETION_INDEX: '4', EDGEWISE_SHARD_COUNT: '4' }, 5)).toEqual({ index: 5, count: 5 });
  });

  it('no count, an index past it, or a malformed value: one line naming them', () => {
    expect(refusal({ JOB_COMPLETION_INDEX: '0' }))
      .toBe('--shard auto: JOB_COMPLETION_INDEX is set (a Kubernetes indexed job) but not the number of shards: give --shards N or set EDGEWISE_SHARD_COUNT to the job\'s completions');
    expect(refusal({ JOB_COMPLETION_INDEX: '4' }, 4)).toBe('--shard auto: JOB_COMPLETION_INDEX=4 is not below the 4 shards (it counts from 0 to completions − 1)');
    expect(refusal({ JOB_COMPLETION_INDEX: '' }, 4)).toBe('--shard auto: JOB_COMPLETION_INDEX="": expected a whole number (0 or more)');
    expect(refusal({ JOB_COMPLETION_INDEX: '1', EDGEWISE_SHARD_COUNT: 'four' })).toBe('EDGEWISE_SHARD_COUNT "four": expected a whole number of shards from 1 to 10000');
  });
});

describe('--shard auto outside a scheduler, or with two', () => {
  it('no variable set: one line naming the variables looked for', () => {
    expect(refusal({ HOME: '/home/x', SLURM_JOB_ID: '7' }))
      .toBe('--shard auto: no scheduler task found: neither SLURM_ARRAY_TASK_ID (a Slurm job array) nor JOB_COMPLETION_INDEX (a Kubernetes indexed job) is set; give --shard K/N outside a scheduler');
  });

  it('both schedulers\' variables: refused rather than guessed', () => {
    expect(refusal({ ...slurmArray(1, 2)[0], JOB_COMPLETION_INDEX: '0' }, 2))
      .toBe('--shard auto: both SLURM_ARRAY_TASK_ID and JOB_COMPLETION_INDEX are set, so the scheduler is not clear; give --shard K/N');
  });

  it('--shards takes a whole number from 1 to 10000', () => {
    expect(parseShardCount('3')).toBe(3);
    expect(parseShardCount(undefined)).toBeNull();
    for (const bad of ['0', '10001', '2.5', '', 'x']) expect(() => parseShardCount(bad)).toThrow(/^--shards ".*": expected a whole number of shards from 1 to 10000$/);
  });
});
