import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { CLI, tempDir } from './support.ts';

// Bad input to `edgewise view`: exit code 2 and one line naming what is wrong (DEVELOPERS.md,
// rules of the house). These fail before anything is built or served.
function view(...args: string[]) {
  const r = spawnSync(process.execPath, [CLI, 'view', ...args], { encoding: 'utf8', timeout: 60_000 });
  return { code: r.status, stderr: r.stderr.trim() };
}

describe('edgewise view, bad input', () => {
  it('refuses a folder that does not exist', () => {
    const r = view(join(tempDir('view-bad'), 'missing'));
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/missing is not a folder/);
    expect(r.stderr.split('\n')).toHaveLength(1);
  });

  it('refuses a file given as the folder, and a --recipe that is not a file', () => {
    const dir = tempDir('view-bad');
    const file = join(dir, 'report.json');
    writeFileSync(file, '{}');
    expect(view(file).code).toBe(2);
    const r = view(dir, '--recipe', join(dir, 'nope.json'));
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--recipe: .*nope\.json is not a file/);
  });

  it('refuses a port outside 0–65535, naming the option', () => {
    const r = view(tempDir('view-bad'), '--port', '70000');
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--port: must be a whole number from 0 to 65535/);
  });

  it('wants exactly one folder', () => {
    const r = view();
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/usage: edgewise view DIR/);
  });
});
