import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { BIN, edgewise, tempDir } from '../support/cli.ts';
import { filmRecipe } from '../support/recipes.ts';

/**
 * Progress on stderr: a redrawn bar with runs done, failures and time left on a terminal;
 * no terminal codes at all when stderr is a pipe. The terminal is a pseudo-terminal from
 * util-linux `script`.
 */
const recipe = {
  // A finer mesh than the default, so the sweep outlasts the half second before a bar appears.
  ...filmRecipe({ widthUm: 8, windows: [[3, 5]], background: 1e15, mesh: { refine: 2 }, dose: 1e13, temperatureC: 1100, minutes: 30 }),
  title: 'progress (test)',
};
const hasScript = spawnSync('script', ['--version'], { encoding: 'utf8' }).status === 0;

describe('edgewise sweep progress', () => {
  const dir = tempDir('edgewise-sweep-progress-');
  const recipePath = join(dir, 'fine.json');
  writeFileSync(recipePath, JSON.stringify(recipe));

  it.skipIf(!hasScript)('on a terminal: a bar with runs done, failures and the time left, cleared before the summary', () => {
    const command = [process.execPath, BIN, 'sweep', recipePath, '--widths', '0.5:0.5:4', '--jobs', '1', '--error-solves', '0', '--out', join(dir, 'tty')].join(' ');
    // NO_COLOR (which the test command sets when its own output is not a terminal) asks for plain lines.
    const env = { ...process.env };
    delete env.NO_COLOR;
    const r = spawnSync('script', ['-qefc', command, '/dev/null'], { encoding: 'utf8', timeout: 120_000, env });
    expect(r.status, r.stdout).toBe(0);
    const frames = r.stdout.split('\r').filter((f) => f.startsWith('['));
    expect(frames.length).toBeGreaterThan(1);
    for (const f of frames) expect(f).toMatch(/^\[[#.]{24}\] sweep +\d+% +[\d.]+ s elapsed(, about [\d.]+ s left)? +\d\/8 runs, 0 failed\x1b\[K$/);
    expect(frames.some((f) => / about [\d.]+ s left/.test(f))).toBe(true);
    // The bar is wiped (carriage return, clear to end of line) before the table is printed.
    expect(r.stdout).toMatch(/\r\x1b\[Krun +windowWidthUm/);
  });

  it('on a pipe: no terminal codes, and a closing line with the counts', () => {
    const r = edgewise(['sweep', recipePath, '--widths', '0.5:0.5:2', '--set', 'mesh.refine=1', '--error-solves', '0', '--out', join(dir, 'pipe')]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).not.toMatch(/[\r\x1b]/);
    expect(r.stderr).toMatch(/^sweep: 4 runs: 4 ok, 0 failed, 0 abandoned, 0 not run; [\d.]+ s with \d+ workers?\n$/m);
  });
});
