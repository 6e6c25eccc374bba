/**
 * Sweep benchmark (not a test): wall time of the same width sweep at 1 and at 2 jobs, and the
 * parallel efficiency T1 / (2·T2). Runs the real binary, as a user would.
 *
 *   npx tsx test/bench/sweep.bench.ts [repeats]
 *
 * Two sweeps of the demo base diffusion: 16 window widths, and the same widths at four drive-in
 * times (64 runs). Each figure is the best of `repeats` (default 3): on a machine shared with
 * other work the best time is the one least disturbed; each repeat's own 1-job/2-job pair is
 * printed too, since the two bests can come from different minutes. "In-sweep" is the time the
 * sweep reports itself (from every run planned to the last file), without Node's start-up or the
 * planning. From the two sizes, the medians give a line t = a + b·runs at each job count: b is
 * what one more run costs, a what every sweep pays once (worker start and each worker's JIT
 * warm-up), so that b₁/(2·b₂) is the efficiency a long sweep tends to. References say how much
 * of a second core the machine gave at that moment: the 16-run sweep as two independent
 * processes (`--shard 1/2` and `--shard 2/2`, one job each, started together), which is the
 * pool's ideal on this machine; a bare arithmetic loop in 1 and in 2 threads; and a loop that
 * streams over arrays the size of a solve's working set, in 1 and in 2 threads.
 */
import { spawn, spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { Worker } from 'node:worker_threads';

const BIN = resolve(import.meta.dirname, '..', '..', 'packages', 'cli', 'bin', 'edgewise.mjs');
const repeats = Number(process.argv[2] ?? 3);

// The demo base diffusion (examples/base-resistor.json) over 16 window widths, and those at four drive-in times.
const recipe = {
  ...JSON.parse(readFileSync(resolve(import.meta.dirname, '..', '..', 'examples', 'base-resistor.json'), 'utf8')),
  title: 'base diffusion for a test resistor (demo scenario, invented), width sweep',
};
const WIDTHS = '1:1:16';
const SIZES = [
  { runs: 16, args: ['--widths', WIDTHS], label: `widths ${WIDTHS} µm` },
  { runs: 64, args: ['--widths', WIDTHS, '--set', 'steps[1].minutes=30,60,90,120'], label: `widths ${WIDTHS} µm × drive-in 30, 60, 90, 120 min` },
];

const dir = mkdtempSync(join(tmpdir(), 'edgewise-sweep-bench-'));
const recipePath = join(dir, 'recipe.json');
writeFileSync(recipePath, JSON.stringify(recipe, null, 2));

function sweep(jobs: number, out: string, args: readonly string[]): { wall: number; inSweep: number } {
  rmSync(out, { recursive: true, force: true });
  const t0 = performance.now();
  const r = spawnSync(process.execPath, [BIN, 'sweep', recipePath, ...args, '--jobs', String(jobs), '--out', out], { encoding: 'utf8' });
  const wall = (performance.now() - t0) / 1000;
  if (r.status !== 0) throw new Error(`sweep --jobs ${jobs} exited ${r.status}: ${r.stderr}`);
  const reported = /; ([\d.]+) s with \d+ workers?/.exec(r.stderr);
  return { wall, inSweep: reported ? Number(reported[1]) : NaN };
}

/** Wall time of `threads` threads each running the same arithmetic loop, s. */
async function loop(threads: number): Promise<number> {
  const code = "let x = 0; for (let i = 0; i < 3e8; i++) x += Math.sqrt(i); require('node:worker_threads').parentPort.postMessage(x);";
  const t0 = performance.now();
  await Promise.all(Array.from({ length: threads }, () => new Promise((done) => new Worker(code, { eval: true }).once('message', done))));
  return (performance.now() - t0) / 1000;
}

/**
 * The same with a loop that streams over arrays the size of a solve's working set (four
 * 0.4 MB fields, as a 390 × 126 nonlinear run keeps: about the 2 MB of L2 a core has), in
 * 1 and 2 threads: how far memory traffic, rather than arithmetic, scales on this machine.
 */
async function streamingLoop(threads: number): Promise<number> {
  const code = 'const n = 49000; const a = [0, 1, 2, 3].map(() => new Float64Array(n).fill(1)); let x = 0;' +
    'for (let r = 0; r < 1500; r++) { const [p, q, u, v] = a; for (let k = 1; k < n - 1; k++) { p[k] = 0.25 * (q[k - 1] + q[k + 1]) + 0.5 * u[k]; v[k] = p[k] - v[k] * 0.5; } x += p[n >> 1]; }' +
    "require('node:worker_threads').parentPort.postMessage(x);";
  const t0 = performance.now();
  await Promise.all(Array.from({ length: threads }, () => new Promise((done) => new Worker(code, { eval: true }).once('message', done))));
  return (performance.now() - t0) / 1000;
}

/** Wall time of the sweep as two processes, one shard each, started together, s. */
async function twoShards(out: string): Promise<number> {
  rmSync(out, { recursive: true, force: true });
  const t0 = performance.now();
  await Promise.all([1, 2].map((k) => new Promise<void>((done, fail) => {
    const child = spawn(process.execPath, [BIN, 'sweep', recipePath, '--widths', WIDTHS, '--jobs', '1', '--shard', `${k}/2`, '--out', out, '--quiet'], { stdio: 'ignore' });
    child.on('exit', (code) => (code === 0 ? done() : fail(new Error(`shard ${k}/2 exited ${code}`))));
  })));
  return (performance.now() - t0) / 1000;
}

// Once to build the bundle, so that no timed launch pays for it.
sweep(1, join(dir, 'warm'), SIZES[0].args);

interface Figures {
  best: Record<1 | 2, { wall: number; inSweep: number }>;
  /** in-sweep times of each repeat, s */
  times: Record<1 | 2, number[]>;
}
const figures: Figures[] = SIZES.map(() => ({
  best: { 1: { wall: Infinity, inSweep: Infinity }, 2: { wall: Infinity, inSweep: Infinity } }, times: { 1: [], 2: [] },
}));
const bare = { 1: Infinity, 2: Infinity };
const streaming = { 1: Infinity, 2: Infinity };
let shards = Infinity;
for (let k = 0; k < repeats; k++) {
  shards = Math.min(shards, await twoShards(join(dir, 'shards')));
  bare[1] = Math.min(bare[1], await loop(1));
  bare[2] = Math.min(bare[2], await loop(2));
  streaming[1] = Math.min(streaming[1], await streamingLoop(1));
  streaming[2] = Math.min(streaming[2], await streamingLoop(2));
  SIZES.forEach((size, n) => {
    for (const jobs of [1, 2] as const) {
      const t = sweep(jobs, join(dir, `jobs-${jobs}`), size.args);
      const f = figures[n];
      f.best[jobs].wall = Math.min(f.best[jobs].wall, t.wall);
      f.best[jobs].inSweep = Math.min(f.best[jobs].inSweep, t.inSweep);
      f.times[jobs].push(t.inSweep);
    }
  });
}
rmSync(dir, { recursive: true, force: true });

const median = (values: readonly number[]) => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)];
const percent = (t1: number, t2: number) => (100 * t1) / (2 * t2);
const efficiency = (t1: number, t2: number) => `${percent(t1, t2).toFixed(0)} %`;
console.log(`sweep benchmark: default error bars, best of ${repeats}; ${availableParallelism()} cores, load average ${loadavg().map((l) => l.toFixed(2)).join(' ')}`);
SIZES.forEach((size, n) => {
  const { best, times } = figures[n];
  const pairs = times[1].map((t1, k) => percent(t1, times[2][k]));
  console.log(`${size.runs} runs (${size.label})`);
  console.log(`  wall, 1 job    ${best[1].wall.toFixed(2)} s   (${((best[1].inSweep / size.runs) * 1000).toFixed(0)} ms per run in the sweep)`);
  console.log(`  wall, 2 jobs   ${best[2].wall.toFixed(2)} s`);
  console.log(`  in-sweep       ${best[1].inSweep.toFixed(2)} s / ${best[2].inSweep.toFixed(2)} s`);
  console.log(`  parallel efficiency T1/(2·T2): wall ${efficiency(best[1].wall, best[2].wall)}, in-sweep ${efficiency(best[1].inSweep, best[2].inSweep)} (target ≥ 80 %)`);
  console.log(`  each repeat's own pair, in-sweep: ${pairs.map((e) => e.toFixed(0)).join(', ')} % (median ${median(pairs).toFixed(0)} %): ` +
    'the spread is the machine\'s, minute to minute');
});
// t = a + b·runs through the two sizes' medians, at each job count.
const [small, large] = SIZES;
const line = (jobs: 1 | 2) => {
  const t0 = median(figures[0].times[jobs]);
  const b = (median(figures[1].times[jobs]) - t0) / (large.runs - small.runs);
  return { a: t0 - b * small.runs, b };
};
const one = line(1);
const two = line(2);
console.log(`from the medians, t = a + b·runs: one more run costs ${(one.b * 1000).toFixed(0)} ms at 1 job and ${(two.b * 1000).toFixed(0)} ms at 2 jobs ` +
  `(a long sweep's efficiency ${efficiency(one.b, two.b)}); every sweep pays a = ${one.a.toFixed(2)} s at 1 job and ${two.a.toFixed(2)} s at 2 jobs once ` +
  '(worker start and JIT warm-up)');
console.log(`two processes on the 16-run sweep, one shard and one job each: ${shards.toFixed(2)} s wall, ` +
  `efficiency ${efficiency(figures[0].best[1].wall, shards)} (the pool's ideal here)`);
// Each loop thread does the same work, so there the efficiency is t1/t2 (not t1/(2·t2)).
console.log(`the machine meanwhile, a bare loop in 1 and in 2 threads (each the same work): ${bare[1].toFixed(2)} s / ${bare[2].toFixed(2)} s, ` +
  `efficiency ${((100 * bare[1]) / bare[2]).toFixed(0)} %`);
console.log(`and a loop streaming over a solve-sized working set (four 0.4 MB arrays) in 1 and 2 threads: ${streaming[1].toFixed(2)} s / ${streaming[2].toFixed(2)} s, ` +
  `efficiency ${((100 * streaming[1]) / streaming[2]).toFixed(0)} %`);
