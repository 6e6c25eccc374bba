import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { progressReporter } from '../../packages/cli/src/progress.ts';
import { BIN, REPO, tempDir } from '../support/cli.ts';
import { filmRecipe } from '../support/recipes.ts';

/**
 * A log that is not a terminal holds no terminal codes (ESC sequences, carriage returns):
 * neither the CLI's progress nor the test command's own report. NO_COLOR (https://no-color.org)
 * asks for plain text on a terminal too.
 */
const ESCAPE = /\x1b/;

/** The lines a progress reporter writes over 10 s of work, on a stream that says whether it is a terminal. */
function progressOutput(isTTY: boolean, env: NodeJS.ProcessEnv): string {
  let now = 0;
  vi.spyOn(performance, 'now').mockImplementation(() => now);
  let text = '';
  const progress = progressReporter({ isTTY, write: (chunk: string | Uint8Array) => { text += String(chunk); return true; } }, 'solving', env);
  for (let k = 1; k <= 100; k++) {
    now = k * 100;
    progress.update(k / 100);
  }
  progress.done();
  return text;
}

describe('progress without terminal codes', () => {
  afterEach(() => { vi.restoreAllMocks(); });

  it('redraws one line on a terminal, and writes plain lines on a pipe or when NO_COLOR or TERM=dumb is set', () => {
    const tty = progressOutput(true, { TERM: 'xterm' });
    expect(tty).toMatch(/\r\[#*\.*\] solving +\d+%.*\x1b\[K/);
    for (const [isTTY, env] of [[false, { TERM: 'xterm' }], [true, { TERM: 'xterm', NO_COLOR: '1' }], [true, { TERM: 'dumb' }]] as const) {
      const plain = progressOutput(isTTY, env);
      expect(plain).toMatch(/^solving +\d+% +[\d.]+ s elapsed/m);
      expect(plain).not.toMatch(ESCAPE);
      expect(plain).not.toContain('\r');
    }
  });

  it.skipIf(spawnSync('script', ['--version']).status !== 0)('a sweep on a terminal with NO_COLOR set prints no terminal codes', () => {
    const dir = tempDir('edgewise-no-colour-');
    const recipePath = join(dir, 'fine.json');
    // A finer mesh than the default, so that the sweep outlasts the half second before progress shows.
    writeFileSync(recipePath, JSON.stringify({ ...filmRecipe({ widthUm: 8, windows: [[3, 5]], background: 1e15, mesh: { refine: 2 }, dose: 1e13, temperatureC: 1100, minutes: 30 }), title: 'no colour (test)' }));
    const command = [process.execPath, BIN, 'sweep', recipePath, '--widths', '0.5:0.5:2', '--jobs', '1', '--error-solves', '0', '--out', join(dir, 'out')].join(' ');
    const plain = spawnSync('script', ['-qefc', command, '/dev/null'], { encoding: 'utf8', timeout: 120_000, env: { ...process.env, TERM: 'xterm', NO_COLOR: '1' } });
    expect(plain.status, plain.stdout).toBe(0);
    expect(plain.stdout).toMatch(/^sweep: 4 runs: 4 ok/m);
    expect(plain.stdout).not.toMatch(ESCAPE);
    // The same on the same pseudo-terminal without NO_COLOR draws its bar.
    const env = { ...process.env };
    delete env.NO_COLOR;
    const drawn = spawnSync('script', ['-qefc', command, '/dev/null'], { encoding: 'utf8', timeout: 120_000, env: { ...env, TERM: 'xterm' } });
    expect(drawn.status, drawn.stdout).toBe(0);
    expect(drawn.stdout).toMatch(/\r\[[#.]{24}\] sweep .*\x1b\[K/);
  });
});

describe('the test command', () => {
  it("writes vitest's report without colour codes into a pipe, even with TERM and CI set (where vitest alone colours it)", () => {
    const env: NodeJS.ProcessEnv = { ...process.env, TERM: 'xterm', CI: 'true' };
    delete env.NO_COLOR;
    delete env.FORCE_COLOR;
    const file = 'test/unit/tridiagonal.test.ts';
    const ours = spawnSync(process.execPath, [join(REPO, 'scripts', 'vitest.mjs'), 'run', file], { cwd: REPO, encoding: 'utf8', env, timeout: 120_000 });
    expect(ours.status, ours.stderr).toBe(0);
    expect(ours.stdout).toMatch(/Tests +1 passed/);
    expect(ours.stdout + ours.stderr).not.toMatch(ESCAPE);
    // The check can fail: vitest started directly colours the same report.
    const direct = spawnSync(process.execPath, [join(REPO, 'node_modules', 'vitest', 'vitest.mjs'), 'run', file], { cwd: REPO, encoding: 'utf8', env, timeout: 120_000 });
    expect(direct.stdout).toMatch(ESCAPE);
  });
});
