import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { edgewise, tempDir } from '../support/cli.ts';
import { filmRecipe } from '../support/recipes.ts';

/** A small two-parameter sweep (4 widths × 2 drive-in times = 8 runs) cut into three shards. */
const recipe = {
  ...filmRecipe({ widthUm: 8, windows: [[3, 5]], background: 1e15, dose: 1e13, temperatureC: 1100, minutes: 10 }),
  title: 'shards and merge (test)',
  sweep: { widthsUm: '0.5:0.5:2', set: { 'steps[1].minutes': [10, 20] } },
};
const RUNS = 8;

describe('edgewise sweep --shard K/N and edgewise merge', () => {
  const dir = tempDir('edgewise-merge-');
  const recipePath = join(dir, 'recipe.json');
  const whole = join(dir, 'whole');
  // Shards 1 and 2 share a folder (as array jobs writing to one place do); shard 3 has its own.
  const shared = join(dir, 'shared');
  const apart = join(dir, 'apart');
  const shardFolder = [shared, shared, apart];
  const results: ReturnType<typeof edgewise>[] = [];

  beforeAll(() => {
    writeFileSync(recipePath, JSON.stringify(recipe, null, 2));
    results.push(edgewise(['sweep', recipePath, '--out', whole, '--error-solves', '1', '--quiet']));
    for (let k = 1; k <= 3; k++) {
      results.push(edgewise(['sweep', recipePath, '--shard', `${k}/3`, '--out', shardFolder[k - 1], '--error-solves', '1', '--quiet']));
    }
  });

  it('each shard runs a deterministic slice: runs K, K+3, K+6, …, and together they are every run once', () => {
    for (const r of results) expect(r.code, r.stderr).toBe(0);
    const ids: number[] = [];
    for (let k = 1; k <= 3; k++) {
      const index = JSON.parse(readFileSync(join(shardFolder[k - 1], `sweep-shard-${k}-of-3.json`), 'utf8'));
      expect(index.shard).toEqual({ index: k, count: 3 });
      const mine = index.runs.map((r: { id: number }) => r.id);
      expect(mine).toEqual(Array.from({ length: RUNS }, (_, j) => j + 1).filter((id) => (id - 1) % 3 === k - 1));
      ids.push(...mine);
    }
    expect(ids.sort((a, b) => a - b)).toEqual(Array.from({ length: RUNS }, (_, j) => j + 1));
    expect(readdirSync(shared).filter((n) => n.startsWith('run-'))).toHaveLength(6);
  });

  it('merging shards 1/3, 2/3 and 3/3 gives the same sweep.csv and runs as the unsharded sweep', () => {
    const out = join(dir, 'merged');
    const r = edgewise(['merge', shared, apart, '--out', out]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toContain(`merged 3 shards: ${RUNS} runs, ${RUNS} ok`);
    expect(readFileSync(join(out, 'sweep.csv'), 'utf8')).toBe(readFileSync(join(whole, 'sweep.csv'), 'utf8'));
    const merged = JSON.parse(readFileSync(join(out, 'sweep.json'), 'utf8'));
    const unsharded = JSON.parse(readFileSync(join(whole, 'sweep.json'), 'utf8'));
    const strip = (runs: { dir: string }[]) => runs.map(({ dir: _dir, ...rest }) => rest);
    expect(strip(merged.runs)).toEqual(strip(unsharded.runs));
    expect({ ...merged, runs: null }).toEqual({ ...unsharded, runs: null });
    // Each run's folder is found from the merged index where the shard wrote it.
    for (const run of merged.runs) {
      const report = JSON.parse(readFileSync(join(out, run.dir, 'report.json'), 'utf8'));
      const fromWhole = JSON.parse(readFileSync(join(whole, `run-000${run.id}`, 'report.json'), 'utf8'));
      expect(report.windows).toEqual(fromWhole.windows);
    }
  });

  it('a missing shard is named, exit 2, nothing written', () => {
    const out = join(dir, 'partial');
    const r = edgewise(['merge', apart, '--out', out]);
    expect(r.code).toBe(2);
    expect(r.stderr.trimEnd()).toBe('edgewise: merge: missing shards 1/3, 2/3 (found 3/3)');
    expect(existsSync(out)).toBe(false);
  });

  it('a shard file that cannot be read is named with the cause in words, exit 2, nothing written', () => {
    // A folder where the shard's table should be: the read fails with EISDIR.
    const broken = join(dir, 'broken');
    expect(edgewise(['sweep', recipePath, '--shard', '1/1', '--out', broken, '--error-solves', '0', '--quiet']).code).toBe(0);
    const table = join(broken, 'sweep-shard-1-of-1.csv');
    rmSync(table);
    mkdirSync(table);
    const out = join(dir, 'from-broken');
    const r = edgewise(['merge', broken, '--out', out]);
    expect(r.code).toBe(2);
    expect(r.stderr.trimEnd()).toBe(`edgewise: ${table}: cannot be read: it is a folder, not a file; give the file inside it`);
    expect(existsSync(out)).toBe(false);
  });

  it('shards of different sweeps are not mixed', () => {
    const other = join(dir, 'other');
    const changed = join(dir, 'changed.json');
    writeFileSync(changed, JSON.stringify({ ...recipe, sweep: { ...recipe.sweep, widthsUm: '0.5:0.5:2.5' } }));
    expect(edgewise(['sweep', changed, '--shard', '3/3', '--out', other, '--error-solves', '1', '--quiet']).code).toBe(0);
    const out = join(dir, 'mixed');
    const r = edgewise(['merge', shared, other, '--out', out]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^edgewise: merge: .*sweep-shard-3-of-3\.json is from a different sweep than .*sweep-shard-1-of-3\.json/);
    expect(existsSync(out)).toBe(false);
  });
});
