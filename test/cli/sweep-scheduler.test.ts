import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync, rmSync, statSync, truncateSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { BIN, edgewise, REPO, tempDir } from '../support/cli.ts';
import { filmRecipe } from '../support/recipes.ts';

/**
 * `--shard auto` as a scheduler's tasks run it (the real binary, with the variables Slurm and
 * Kubernetes set), the re-run of tasks after a failure with --resume, and `--plan`.
 */
const yaml = createRequire(join(REPO, 'packages', 'cli', 'package.json'))('yaml') as {
  // eslint-disable-next-line @typescript-eslint/no-explicit-any
  parseAllDocuments(text: string): { errors: unknown[]; toJS(): any }[];
};

const recipe = {
  ...filmRecipe({ widthUm: 8, windows: [[3, 5]], background: 1e15, dose: 1e13, temperatureC: 1100, minutes: 10 }),
  title: 'scheduler tasks (test)',
  sweep: { widthsUm: '0.5:0.5:2', set: { 'steps[1].minutes': [10, 20] } },
};
const RUNS = 8;

/** Runs the binary with only these scheduler variables on top of a clean environment. */
function task(args: string[], env: Record<string, string>) {
  const clean = Object.fromEntries(Object.entries(process.env).filter(([k]) => !k.startsWith('SLURM_') && k !== 'JOB_COMPLETION_INDEX' && k !== 'EDGEWISE_SHARD_COUNT'));
  const r = spawnSync(process.execPath, [BIN, ...args], { cwd: REPO, env: { ...clean, ...env }, encoding: 'utf8', timeout: 120_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

/** The variables Slurm sets in task ID of `--array=MIN-MAX`. */
function slurm(id: number, min: number, max: number): Record<string, string> {
  return {
    SLURM_ARRAY_TASK_ID: String(id), SLURM_ARRAY_TASK_MIN: String(min), SLURM_ARRAY_TASK_MAX: String(max),
    SLURM_ARRAY_TASK_COUNT: String(max - min + 1), SLURM_ARRAY_TASK_STEP: '1', SLURM_ARRAY_JOB_ID: '41', SLURM_JOB_ID: String(41 + id),
  };
}

describe('edgewise sweep --shard auto: the tasks of a scheduler', () => {
  const dir = tempDir('edgewise-sched-');
  const recipePath = join(dir, 'recipe.json');
  const whole = join(dir, 'whole');
  const array = join(dir, 'slurm');
  const indexed = join(dir, 'kubernetes');
  const sweep = (out: string) => ['sweep', recipePath, '--out', out, '--error-solves', '0', '--jobs', '1', '--quiet', '--shard', 'auto'];

  beforeAll(() => {
    writeFileSync(recipePath, JSON.stringify(recipe, null, 2));
    const r = edgewise(['sweep', recipePath, '--out', whole, '--error-solves', '0', '--quiet']);
    expect(r.code, r.stderr).toBe(0);
  });

  it('a Slurm array --array=0-2 (tasks 0, 1, 2): three shards into one folder; merge gives the unsharded sweep.csv', () => {
    for (let id = 0; id <= 2; id++) {
      const r = task(sweep(array), slurm(id, 0, 2));
      expect(r.code, r.stderr).toBe(0);
      expect(existsSync(join(array, `sweep-shard-${id + 1}-of-3.json`))).toBe(true);
    }
    const m = edgewise(['merge', array]);
    expect(m.code, m.stderr).toBe(0);
    expect(m.stdout).toContain(`merged 3 shards: ${RUNS} runs, ${RUNS} ok`);
    expect(readFileSync(join(array, 'sweep.csv'), 'utf8')).toBe(readFileSync(join(whole, 'sweep.csv'), 'utf8'));
  });

  it('a Kubernetes indexed job (JOB_COMPLETION_INDEX 0–2, EDGEWISE_SHARD_COUNT=3, one with --shards 3): the same merge', () => {
    for (let k = 0; k <= 2; k++) {
      const r = k === 1
        ? task([...sweep(indexed), '--shards', '3'], { JOB_COMPLETION_INDEX: String(k) })
        : task(sweep(indexed), { JOB_COMPLETION_INDEX: String(k), EDGEWISE_SHARD_COUNT: '3' });
      expect(r.code, r.stderr).toBe(0);
    }
    const m = edgewise(['merge', indexed]);
    expect(m.code, m.stderr).toBe(0);
    expect(readFileSync(join(indexed, 'sweep.csv'), 'utf8')).toBe(readFileSync(join(whole, 'sweep.csv'), 'utf8'));
  });

  it('tasks re-run after a failure with --resume keep their finished runs and give the same merge', () => {
    // Task 1 (shard 2/3: runs 2, 5, 8) died before run 5's folder was marked finished; task 0
    // (shard 1/3: runs 1, 4, 7) died as run 4's field.npy was being written (left empty).
    rmSync(join(array, 'run-0005', 'recipe.json'));
    truncateSync(join(array, 'run-0004', 'field.npy'), 0);
    rmSync(join(array, 'sweep.csv'));
    const finished: string[] = [];
    for (let id = 0; id <= 2; id++) {
      const r = task([...sweep(array), '--resume'].filter((a) => a !== '--quiet'), slurm(id, 0, 2));
      expect(r.code, r.stderr).toBe(0);
      finished.push(/\((\d+) already finished\)/.exec(r.stderr)?.[1] ?? '0');
    }
    // Tasks 0 and 1 re-ran only their broken run; task 2 (runs 3, 6) had nothing to do.
    expect(finished).toEqual(['2', '2', '2']);
    expect(statSync(join(array, 'run-0004', 'field.npy')).size).toBe(statSync(join(whole, 'run-0004', 'field.npy')).size);
    const m = edgewise(['merge', array]);
    expect(m.code, m.stderr).toBe(0);
    expect(readFileSync(join(array, 'sweep.csv'), 'utf8')).toBe(readFileSync(join(whole, 'sweep.csv'), 'utf8'));
  });

  it('--shard auto outside a scheduler: one line naming the variables, exit 2, nothing written', () => {
    const out = join(dir, 'nowhere');
    const r = task(sweep(out), {});
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('edgewise: --shard auto: no scheduler task found: neither SLURM_ARRAY_TASK_ID (a Slurm job array) nor JOB_COMPLETION_INDEX (a Kubernetes indexed job) is set; give --shard K/N outside a scheduler\n');
    expect(existsSync(out)).toBe(false);
  });

  it('a Slurm task with a variable missing, or --shards without --shard auto: one line, exit 2, nothing written', () => {
    const out = join(dir, 'nowhere');
    const { SLURM_ARRAY_TASK_COUNT: _, ...partial } = slurm(1, 1, 3);
    const r = task(sweep(out), partial);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^edgewise: --shard auto: SLURM_ARRAY_TASK_COUNT is not set \(Slurm sets .*\)\n$/);
    const s = task(['sweep', recipePath, '--out', out, '--shards', '3', '--quiet'], {});
    expect(s.code).toBe(2);
    expect(s.stderr).toBe('edgewise: --shards N goes with --shard auto (the count of a Kubernetes indexed job) or with --plan\n');
    expect(existsSync(out)).toBe(false);
  });
});

describe('edgewise sweep --plan', () => {
  const dir = tempDir('edgewise-plan-');
  const recipePath = join(dir, 'recipe.json');
  const out = join(dir, 'results');
  writeFileSync(recipePath, JSON.stringify(recipe, null, 2));
  const plan = (...more: string[]) => edgewise(['sweep', recipePath, '--out', out, '--plan', '--shards', '3', ...more]);

  it('prints the runs and their split into shards, and writes nothing', () => {
    const r = plan('--jobs', '2');
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout.split('\n')[0]).toMatch(/^plan: 8 runs \(4 windowWidthUm × 2 steps\[1\]\.minutes\) in 3 shards of 2 workers each; the largest shard holds \d\.\d\d× the mean work/);
    // Shard K of 3 takes runs K, K+3, K+6: 3, 3 and 2 runs.
    const rows = r.stdout.split('\n').filter((l) => /^\d\/3 /.test(l)).map((l) => l.trim().split(/\s{2,}/));
    expect(rows.map((c) => [c[0], c[1], c[2]])).toEqual([['1/3', '3', '1, 4, 7'], ['2/3', '3', '2, 5, 8'], ['3/3', '2', '3, 6']]);
    expect(existsSync(out)).toBe(false);
  });

  it('the Slurm script is valid bash: an array of 3 tasks of --shard auto, then the merge after afterok', () => {
    const r = plan('--scheduler', 'slurm', '--jobs', '2');
    expect(r.code, r.stderr).toBe(0);
    const script = join(dir, 'submit.sh');
    writeFileSync(script, r.stdout);
    const syntax = spawnSync('bash', ['-n', script], { encoding: 'utf8' });
    expect(syntax.status, syntax.stderr).toBe(0);
    expect(r.stdout).toMatch(/^#!\/bin\/bash\n/);
    expect(r.stdout).toMatch(/sbatch --parsable --job-name=edgewise-sweep-[0-9a-f]{8} --array=1-3 --cpus-per-task=2 /);
    expect(r.stdout).toContain(`sweep ${recipePath} --out ${out} --jobs "$SLURM_CPUS_PER_TASK" --shard auto --resume --quiet`);
    expect(r.stdout).toMatch(/sbatch --parsable --job-name=edgewise-merge-[0-9a-f]{8} --dependency=afterok:"\$\{sweep%%;\*\}"/);
    expect(r.stdout).toContain(`merge ${out}\n`);
  });

  it('the Kubernetes manifest is two YAML documents: an indexed job of 3 completions with the count, and the merge', () => {
    const r = plan('--scheduler', 'kubernetes');
    expect(r.code, r.stderr).toBe(0);
    const [sweepJob, mergeJob] = yaml.parseAllDocuments(r.stdout).map((d) => {
      expect(d.errors).toEqual([]);
      return d.toJS();
    });
    expect(sweepJob.kind).toBe('Job');
    expect(sweepJob.spec).toMatchObject({ completionMode: 'Indexed', completions: 3, parallelism: 3 });
    expect(sweepJob.metadata.name).toMatch(/^[a-z0-9-]{1,63}$/);
    const container = sweepJob.spec.template.spec.containers[0];
    expect(container.env).toEqual([{ name: 'EDGEWISE_SHARD_COUNT', value: '3' }]);
    expect(container.command.at(-1)).toContain('--shard auto --resume');
    expect(mergeJob.metadata.labels).toEqual({ 'edgewise/step': 'merge' });
    expect(mergeJob.spec.template.spec.containers[0].command.at(-1)).toMatch(/ merge .*results$/);
  });

  it('a bad --scheduler or --shards with --plan: one line, exit 2', () => {
    const r = plan('--scheduler', 'pbs');
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('edgewise: --scheduler "pbs": expected slurm or kubernetes\n');
    const s = edgewise(['sweep', recipePath, '--plan', '--shards', '0']);
    expect(s.code).toBe(2);
    expect(s.stderr).toBe('edgewise: --shards "0": expected a whole number of shards from 1 to 10000\n');
  });
});

