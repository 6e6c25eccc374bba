import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { BIN, csvFields, edgewise, tempDir } from '../support/cli.ts';
import { filmRecipe } from '../support/recipes.ts';

/**
 * Faults in a sweep: kill -9 in the middle then --resume, Ctrl-C, a run that fails. The recipe
 * is a film and drive-in on a finer mesh than the default, so that a run lasts long enough
 * (about a tenth of a second or more) to interrupt the sweep between runs; error bars (coarser
 * solves) play no part here and are left out.
 */
const recipe = {
  ...filmRecipe({ widthUm: 8, windows: [[3, 5]], background: 1e15, mesh: { refine: 1.5 }, dose: 1e13, temperatureC: 1100, minutes: 30 }),
  title: 'film and drive-in on a fine mesh (test)',
};
const WIDTHS = '0.5:0.5:4';
const RUNS = 8;

function walk(dir: string, out: string[] = []): string[] {
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, entry.name);
    if (entry.isDirectory()) walk(p, out);
    else out.push(p);
  }
  return out;
}

/**
 * Every file that is not a temporary is whole: JSON parses, a .npy holds exactly the bytes its
 * header promises (NumPy format 1.0: 10-byte preamble, header, 8 bytes per float64), a CSV ends
 * in a newline with as many fields on each line as in its header. Returns the temporaries.
 */
function checkWhole(dir: string): string[] {
  const temps: string[] = [];
  for (const path of walk(dir)) {
    if (path.endsWith('.tmp')) {
      temps.push(path);
      continue;
    }
    const bytes = readFileSync(path);
    if (path.endsWith('.json')) expect(() => JSON.parse(bytes.toString('utf8')), path).not.toThrow();
    else if (path.endsWith('.npy')) {
      const headerLength = bytes.readUInt16LE(8);
      const shape = /'shape': \(([^)]*)\)/.exec(bytes.subarray(10, 10 + headerLength).toString('latin1'))![1];
      const count = shape.split(',').filter((s) => s.trim() !== '').reduce((n, s) => n * Number(s), 1);
      expect(bytes.length, path).toBe(10 + headerLength + 8 * count);
    } else if (path.endsWith('.csv')) {
      const text = bytes.toString('utf8');
      expect(text.endsWith('\n'), path).toBe(true);
      const lines = text.trimEnd().split('\n');
      const width = csvFields(lines[0]).length;
      for (const line of lines) expect(csvFields(line).length, `${path}: ${line}`).toBe(width);
    }
  }
  return temps;
}

function finishedRuns(out: string): string[] {
  if (!existsSync(out)) return [];
  return readdirSync(out).filter((d) => d.startsWith('run-') && existsSync(join(out, d, 'recipe.json')));
}

/** Starts the binary, waits until `ready()` or its exit, sends `signal`, resolves with the exit code. */
function interrupt(args: string[], ready: () => boolean, signal: NodeJS.Signals) {
  return new Promise<{ code: number | null; signal: NodeJS.Signals | null; stderr: string; stdout: string }>((resolve, reject) => {
    const child = spawn(process.execPath, [BIN, ...args], { stdio: ['ignore', 'pipe', 'pipe'] });
    let stderr = '';
    let stdout = '';
    child.stderr.on('data', (d) => (stderr += d));
    child.stdout.on('data', (d) => (stdout += d));
    let sent = false;
    const poll = setInterval(() => {
      if (!sent && ready()) {
        sent = true;
        child.kill(signal);
      }
    }, 10);
    child.on('error', reject);
    child.on('exit', (code, sig) => {
      clearInterval(poll);
      resolve({ code, signal: sig, stderr, stdout });
    });
  });
}

describe('edgewise sweep faults', () => {
  const dir = tempDir('edgewise-sweep-faults-');
  const recipePath = join(dir, 'fine.json');
  const reference = join(dir, 'reference');
  let referenceCsv = '';

  beforeAll(() => {
    writeFileSync(recipePath, JSON.stringify(recipe, null, 2));
    const r = edgewise(['sweep', recipePath, '--widths', WIDTHS, '--out', reference, '--jobs', '2', '--error-solves', '0', '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    referenceCsv = readFileSync(join(reference, 'sweep.csv'), 'utf8');
  });

  it('kill -9 in the middle, then --resume: the same sweep.csv as an uninterrupted run, no file truncated, finished runs not redone', async () => {
    const out = join(dir, 'killed');
    const killed = await interrupt(['sweep', recipePath, '--widths', WIDTHS, '--out', out, '--jobs', '2', '--error-solves', '0', '--quiet'],
      () => finishedRuns(out).length >= 2, 'SIGKILL');
    expect(killed.signal).toBe('SIGKILL');
    const before = finishedRuns(out);
    // Killed in the middle: some runs finished, not all.
    expect(before.length).toBeGreaterThanOrEqual(2);
    expect(before.length).toBeLessThan(RUNS);
    checkWhole(out);
    const stamps = Object.fromEntries(before.map((d) => [d, statSync(join(out, d, 'report.json')).mtimeMs]));

    const resumed = edgewise(['sweep', recipePath, '--widths', WIDTHS, '--out', out, '--jobs', '2', '--error-solves', '0', '--resume']);
    expect(resumed.code, resumed.stderr).toBe(0);
    expect(resumed.stderr).toMatch(new RegExp(`${RUNS} runs: ${RUNS} ok \\((\\d+) already finished\\)`));
    const reused = Number(/\((\d+) already finished\)/.exec(resumed.stderr)![1]);
    expect(reused).toBeGreaterThanOrEqual(before.length);
    for (const d of before) expect(statSync(join(out, d, 'report.json')).mtimeMs, d).toBe(stamps[d]);

    expect(readFileSync(join(out, 'sweep.csv'), 'utf8')).toBe(referenceCsv);
    expect(checkWhole(out)).toEqual([]);
    const index = JSON.parse(readFileSync(join(out, 'sweep.json'), 'utf8'));
    expect(index.runs.map((r: { status: string }) => r.status)).toEqual(new Array(RUNS).fill('ok'));
  });

  it('Ctrl-C starts no new runs, lets the running ones finish, records the rest as pending and exits 130', async () => {
    const out = join(dir, 'interrupted');
    const stopped = await interrupt(['sweep', recipePath, '--widths', WIDTHS, '--out', out, '--jobs', '1', '--error-solves', '0'],
      () => finishedRuns(out).length >= 1, 'SIGINT');
    expect(stopped.code).toBe(130);
    expect(stopped.stderr).toContain('stopped by SIGINT; run the same command with --resume');
    expect(checkWhole(out)).toEqual([]);
    const index = JSON.parse(readFileSync(join(out, 'sweep.json'), 'utf8'));
    const statuses: string[] = index.runs.map((r: { status: string }) => r.status);
    const done = finishedRuns(out).length;
    // The run in progress at Ctrl-C finished too; nothing was abandoned.
    expect(statuses.filter((s) => s === 'ok')).toHaveLength(done);
    expect(statuses.filter((s) => s === 'pending')).toHaveLength(RUNS - done);
    expect(done).toBeLessThan(RUNS);
    const rows = readFileSync(join(out, 'sweep.csv'), 'utf8').trimEnd().split('\n').slice(1).map(csvFields);
    expect(rows.map((r) => r[r.length - 2])).toEqual(statuses);

    const resumed = edgewise(['sweep', recipePath, '--widths', WIDTHS, '--out', out, '--jobs', '2', '--error-solves', '0', '--resume', '--quiet']);
    expect(resumed.code, resumed.stderr).toBe(0);
    expect(readFileSync(join(out, 'sweep.csv'), 'utf8')).toBe(referenceCsv);
  });

  it('a run that fails is recorded with its error, the others go on, and the exit code is 3', () => {
    const out = join(dir, 'failing');
    // Run 2's folder cannot be made: a plain file holds its name.
    mkdirSync(out, { recursive: true });
    writeFileSync(join(out, 'run-0002'), 'not a folder');
    const r = edgewise(['sweep', recipePath, '--widths', '1,2,3', '--set', 'mesh.refine=1', '--out', out, '--jobs', '2', '--error-solves', '0']);
    expect(r.code).toBe(3);
    expect(r.stderr).toContain('1 of 3 runs failed');
    expect(r.stdout).toMatch(/run 2 failed: .*run-0002/);
    const rows = readFileSync(join(out, 'sweep.csv'), 'utf8').trimEnd().split('\n').map(csvFields);
    const header = rows[0];
    const status = header.indexOf('status');
    const error = header.indexOf('error');
    expect(rows.slice(1).map((row) => row[status])).toEqual(['ok', 'failed', 'ok']);
    expect(rows[2][error]).toMatch(/run-0002/);
    expect(rows[1][error]).toBe('');
    const index = JSON.parse(readFileSync(join(out, 'sweep.json'), 'utf8'));
    expect(index.runs[1]).toMatchObject({ id: 2, status: 'failed' });
    expect(index.runs[1].error).toBe(rows[2][error]);
    expect(existsSync(join(out, 'run-0003', 'report.json'))).toBe(true);
  });
});
