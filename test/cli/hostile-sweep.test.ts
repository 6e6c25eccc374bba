import { copyFileSync, cpSync, existsSync, readdirSync, readFileSync, rmSync, statSync, symlinkSync, truncateSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { edgewise, tempDir } from '../support/cli.ts';
import { filmRecipe } from '../support/recipes.ts';

/**
 * Hostile and careless states of sweep folders, as a probe found them: run folders deleted or
 * broken behind a shard's back, files cut short, shards of different splits, a smaller sweep
 * written over a larger one. Each case is a folder made from real sweeps, one command, the
 * line the program must answer with ({dir} is the case's folder) and its exit code.
 */
const recipe = {
  ...filmRecipe({ widthUm: 8, windows: [[3, 5]], background: 1e15, dose: 1e13, temperatureC: 1100, minutes: 10 }),
  title: 'hostile sweep folders (test)',
  sweep: { widthsUm: '0.5:0.5:2' },
};

const root = tempDir('edgewise-hostile-sweep-');
const recipePath = join(root, 'recipe.json');
/** Shards 1/3, 2/3, 3/3 of the 4-run sweep in one folder. */
const thirds = join(root, 'thirds');
/** Shards 1/2, 2/4 and 4/4 of the same sweep, each in a folder of its own. */
const other = (k: number, n: number) => join(root, `shard-${k}-of-${n}`);
/** The whole sweep, unsharded. */
const whole = join(root, 'whole');

const sweep = (out: string, ...more: string[]) => ['sweep', recipePath, '--out', out, '--error-solves', '0', '--jobs', '1', ...more];

/** Copies a made folder to the case's own, so that each case breaks only its copy. */
function copy(from: string, to: string): void {
  cpSync(from, to, { recursive: true });
}

/** Adds shard K/N's index and table (made in its own folder) to `to`. */
function addShard(k: number, n: number, to: string): void {
  for (const ext of ['json', 'csv']) copyFileSync(join(other(k, n), `sweep-shard-${k}-of-${n}.${ext}`), join(to, `sweep-shard-${k}-of-${n}.${ext}`));
}

interface Case {
  name: string;
  /** makes the case's folder `dir` and returns the command's arguments */
  make: (dir: string) => string[];
  code: number;
  /** the line after "edgewise: " for exit 2 (the whole of stderr), or a line stderr holds */
  line: string;
  /** what must hold of the folder afterwards */
  check?: (dir: string) => void;
}

const CASES: Case[] = [
  // Merge checks the run folders its shards list as ok.
  { name: 'a run folder deleted after its shard finished', code: 2,
    make: (dir) => { copy(thirds, dir); rmSync(join(dir, 'run-0002'), { recursive: true }); return ['merge', dir]; },
    line: 'merge: 1 run listed as ok is not whole: run 2 ({dir}/run-0002): the folder is missing (run the shard again with --resume to redo them)',
    check: (dir) => expect(existsSync(join(dir, 'sweep.csv'))).toBe(false) },
  { name: 'a garbage report.json', code: 2,
    make: (dir) => { copy(thirds, dir); writeFileSync(join(dir, 'run-0003', 'report.json'), '{"schema": "edgew'); return ['merge', dir]; },
    line: 'merge: 1 run listed as ok is not whole: run 3 ({dir}/run-0003): report.json is not readable JSON (run the shard again with --resume to redo them)' },
  { name: 'a report.json of another kind', code: 2,
    make: (dir) => { copy(thirds, dir); writeFileSync(join(dir, 'run-0001', 'report.json'), '{"schema": "edgewise.report/1"}\n'); return ['merge', dir]; },
    line: 'merge: 1 run listed as ok is not whole: run 1 ({dir}/run-0001): report.json is not a whole report (title does not fit the report schema) (run the shard again with --resume to redo them)' },
  { name: 'a field.npy cut to 0 bytes, and an x.npy cut short', code: 2,
    make: (dir) => {
      copy(thirds, dir);
      truncateSync(join(dir, 'run-0004', 'field.npy'), 0);
      truncateSync(join(dir, 'run-0001', 'x.npy'), statSync(join(dir, 'run-0001', 'x.npy')).size - 8);
      return ['merge', dir];
    },
    line: `merge: 2 runs listed as ok are not whole: run 1 ({dir}/run-0001): x.npy holds {xshort} bytes, not the {xwhole} its header and report.json give; run 4 ({dir}/run-0004): field.npy is not a whole .npy file (0 bytes, no NumPy header) (run the shard again with --resume to redo them)` },

  // --resume redoes a run whose files are not whole.
  { name: '--resume with a field.npy of 0 bytes redoes that run', code: 0,
    make: (dir) => { copy(whole, dir); truncateSync(join(dir, 'run-0002', 'field.npy'), 0); return sweep(dir, '--resume'); },
    line: 'sweep: 4 runs: 4 ok (3 already finished), 0 failed, 0 abandoned, 0 not run',
    check: (dir) => expect(statSync(join(dir, 'run-0002', 'field.npy')).size).toBe(statSync(join(whole, 'run-0002', 'field.npy')).size) },

  // Merge names shards of different splits.
  { name: 'shards 1/3, 2/4 and 3/3', code: 2,
    make: (dir) => { copy(thirds, dir); rmSync(join(dir, 'sweep-shard-2-of-3.json')); rmSync(join(dir, 'sweep-shard-2-of-3.csv')); addShard(2, 4, dir); return ['merge', dir]; },
    line: 'merge: the shards are of 2 different splits (1/3, 3/3; 2/4): give the shards of one split, all --shard K/N with the same N' },
  { name: 'shards 1/2, 2/4 and 4/4 in three folders', code: 2,
    make: () => ['merge', other(1, 2), other(2, 4), other(4, 4)],
    line: 'merge: the shards are of 2 different splits (1/2; 2/4, 4/4): give the shards of one split, all --shard K/N with the same N' },

  // A smaller sweep into an older, larger sweep's folder.
  { name: 'a 2-run sweep into the folder of a 4-run sweep removes run-0003 and run-0004', code: 0,
    make: (dir) => { copy(whole, dir); return sweep(dir, '--widths', '0.5:0.5:1'); },
    line: 'sweep: removed 2 run folders of an earlier sweep that this one does not make: run-0003, run-0004',
    check: (dir) => expect(readdirSync(dir).filter((n) => n.startsWith('run-')).sort()).toEqual(['run-0001', 'run-0002']) },
  { name: 'a stale run folder holding a file of the user\'s is named and left', code: 0,
    make: (dir) => { copy(whole, dir); writeFileSync(join(dir, 'run-0004', 'notes.txt'), 'mine\n'); return sweep(dir, '--widths', '0.5:0.5:1'); },
    line: 'warning: {dir} holds 1 run folder that this sweep does not make, with files of other names or leading elsewhere, left as they are: run-0004',
    check: (dir) => {
      expect(existsSync(join(dir, 'run-0004', 'notes.txt'))).toBe(true);
      expect(existsSync(join(dir, 'run-0003'))).toBe(false);
    } },
  { name: 'a stale run folder that is a symbolic link is named and left, and what it leads to kept', code: 0,
    make: (dir) => {
      copy(whole, dir);
      const elsewhere = join(root, `elsewhere-${Math.random().toString(36).slice(2)}`);
      copy(join(whole, 'run-0004'), elsewhere);
      rmSync(join(dir, 'run-0004'), { recursive: true });
      symlinkSync(elsewhere, join(dir, 'run-0004'));
      writeFileSync(join(dir, 'elsewhere.txt'), elsewhere);
      return sweep(dir, '--widths', '0.5:0.5:1');
    },
    line: 'warning: {dir} holds 1 run folder that this sweep does not make, with files of other names or leading elsewhere, left as they are: run-0004',
    check: (dir) => expect(readdirSync(readFileSync(join(dir, 'elsewhere.txt'), 'utf8')).sort()).toEqual(readdirSync(join(whole, 'run-0004')).sort()) },
  { name: 'a stale shard removes only the stale folders of its own slice', code: 0,
    // Shard 1/2 of the 2-run sweep owns odd ids: run-0003 is its own, run-0004 is shard 2/2's.
    make: (dir) => { copy(whole, dir); return sweep(dir, '--widths', '0.5:0.5:1', '--shard', '1/2'); },
    line: 'sweep: removed 1 run folder of an earlier sweep that this one does not make: run-0003',
    check: (dir) => expect(existsSync(join(dir, 'run-0004'))).toBe(true) },
];

describe('hostile sweep folders: one line each, with its exit code', () => {
  beforeAll(() => {
    writeFileSync(recipePath, JSON.stringify(recipe, null, 2));
    const made = [
      edgewise(sweep(whole, '--quiet')),
      ...[1, 2, 3].map((k) => edgewise(sweep(thirds, '--shard', `${k}/3`, '--quiet'))),
      ...([[1, 2], [2, 4], [4, 4]] as const).map(([k, n]) => edgewise(sweep(other(k, n), '--shard', `${k}/${n}`, '--quiet'))),
    ];
    for (const r of made) expect(r.code, r.stderr).toBe(0);
  });

  CASES.forEach((c, k) => {
    it(c.name, () => {
      const dir = join(root, `case-${k}`);
      const r = edgewise(c.make(dir));
      const x = join(whole, 'run-0001', 'x.npy');
      const line = c.line.replaceAll('{dir}', dir).replace('{xshort}', String(statSync(x).size - 8)).replace('{xwhole}', String(statSync(x).size));
      expect(r.code, r.stderr).toBe(c.code);
      if (c.code === 2) expect(r.stderr).toBe(`edgewise: ${line}\n`);
      else expect(r.stderr.split('\n').map((l) => l.replace(/; [\d.]+ s with \d+ workers?$/, ''))).toContain(line);
      c.check?.(dir);
    });
  });
});
