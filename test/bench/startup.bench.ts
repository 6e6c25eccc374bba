/**
 * Whole-process start-up: `edgewise run` on the reference case (node start, loading the
 * bundle, reading and checking the recipe, the solve with its two coarser error-bar solves,
 * writing the run folder) next to `node -e 0`, the floor any Node program pays.
 * Prints medians of interleaved runs; asserts nothing.
 *
 *   node scripts/run-ts.mjs test/bench/startup.bench.ts [ROUNDS]   (default 15 rounds)
 *
 * Also prints where the time goes: `edgewise --version` (node start and the launcher, no
 * command loaded), `run --error-solves 0`, and the in-process solve time the run reports.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { referenceRecipe } from './reference-case.ts';

const rounds = Number(process.argv[2] ?? 15);
const dir = mkdtempSync(join(tmpdir(), 'edgewise-startup-'));
const recipePath = join(dir, 'reference.json');
writeFileSync(recipePath, JSON.stringify(referenceRecipe()));
const cli = join(process.cwd(), 'packages', 'cli', 'bin', 'edgewise.mjs');
const out = join(dir, 'out');

const commands: [string, string[]][] = [
  ['node -e 0', ['-e', '0']],
  ['edgewise --version', [cli, '--version']],
  ['edgewise run (reference case)', [cli, 'run', recipePath, '--out', out, '--quiet']],
  ['edgewise run --error-solves 0', [cli, 'run', recipePath, '--out', out, '--quiet', '--error-solves', '0']],
];

// One run first, so that the launcher has built its bundle before anything is timed.
execFileSync(process.execPath, [cli, 'run', recipePath, '--out', out, '--quiet']);

const times = commands.map(() => [] as number[]);
let solveSeconds: number[] = [];
for (let r = 0; r < rounds; r++) {
  commands.forEach(([, args], k) => {
    const t0 = performance.now();
    const result = spawnSync(process.execPath, args, { encoding: 'utf8' });
    times[k].push(performance.now() - t0);
    if (result.status !== 0) throw new Error(`${args.join(' ')}: exit ${result.status}: ${result.stderr}`);
    const solved = /time steps, ([\d.]+) s/.exec(result.stdout);
    if (k === 2 && solved) solveSeconds.push(Number(solved[1]));
  });
}
rmSync(dir, { recursive: true, force: true });

const median = (v: number[]) => {
  const s = [...v].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};
console.log(`Whole process, medians of ${rounds} interleaved rounds (wall clock; the machine may be shared):`);
for (const [k, [label]] of commands.entries()) {
  const v = times[k];
  console.log(`  ${label.padEnd(32)} ${median(v).toFixed(0).padStart(5)} ms   (range ${Math.min(...v).toFixed(0)}–${Math.max(...v).toFixed(0)} ms)`);
}
const runMs = median(times[2]);
const nodeMs = median(times[0]);
console.log(`  run on the reference case: ${(runMs / 1000).toFixed(3)} s (target ≤ 0.25 s), ${(runMs - nodeMs).toFixed(0)} ms above node -e 0`);
if (solveSeconds.length > 0) console.log(`  of which the run's own clock (read, check, solve, analyse, error bars, write): ${(median(solveSeconds) * 1000).toFixed(0)} ms`);
