import { copyFileSync, existsSync, mkdirSync, readdirSync, realpathSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { EnvironmentError, fileSystemError, InputError } from '../../packages/cli/src/errors.ts';
import { strayFileSystemError } from '../../packages/cli/src/main.ts';
import { edgewise, REPO, tempDir } from '../support/cli.ts';

/**
 * Hostile paths: output folders that cannot be written, recipe paths that cannot be read.
 * Each answer is one line with its exit code;
 * expected lines are the messages the program is meant to give, built from the paths of the case.
 * Temporary folders are taken by their real path, so that the paths in the messages are those
 * the program sees.
 */
const base = () => realpathSync(tempDir('edgewise-paths-'));

function recipeIn(dir: string): string {
  const path = join(dir, 'recipe.json');
  copyFileSync(join(REPO, 'examples', 'base-resistor.json'), path);
  return path;
}

describe('output folders that cannot be written: one line naming the path, the cause and what to do', () => {
  // Tests run as root in CI, where permissions stop no write; a file where a folder must be
  // (ENOTDIR), a folder where a file must be (EISDIR) and /proc (no new entries) stop root too.
  it('run: --out under a regular file (exit 2, nothing written)', () => {
    const dir = base();
    const recipe = recipeIn(dir);
    const file = join(dir, 'plain-file');
    writeFileSync(file, 'not a folder');
    const r = edgewise(['run', recipe, '--out', join(file, 'out'), '--error-solves', '0', '--quiet']);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr).toBe(`edgewise: ${file}/out/field.npy: cannot be written: ${file} is a file, not a folder; move that file away, or choose another folder with --out\n`);
    expect(readdirSync(dir).sort()).toEqual(['plain-file', 'recipe.json']);
  });

  it('sweep: --out two levels under a regular file (exit 2, nothing written)', () => {
    const dir = base();
    const recipe = recipeIn(dir);
    const file = join(dir, 'plain-file');
    writeFileSync(file, 'not a folder');
    const out = join(file, 'a', 'b');
    const r = edgewise(['sweep', recipe, '--widths', '4,5', '--out', out, '--jobs', '1', '--error-solves', '0', '--quiet']);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr).toBe(`edgewise: ${out}: cannot be written: ${file} is a file, not a folder; move that file away, or choose another folder with --out\n`);
    expect(readdirSync(dir).sort()).toEqual(['plain-file', 'recipe.json']);
  });

  it('run: a folder where report.json goes (exit 2, the folder untouched, no temporary left)', () => {
    const dir = base();
    const recipe = recipeIn(dir);
    const out = join(dir, 'out');
    mkdirSync(join(out, 'report.json'), { recursive: true });
    writeFileSync(join(out, 'report.json', 'keep'), 'keep');
    const r = edgewise(['run', recipe, '--out', out, '--error-solves', '0', '--quiet']);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr).toBe(`edgewise: ${out}/report.json: cannot be written: it is a folder, not a file; move that folder away, or choose another folder with --out\n`);
    expect(readdirSync(join(out, 'report.json'))).toEqual(['keep']);
    expect(readdirSync(out).filter((n) => n.endsWith('.tmp'))).toEqual([]);
  });

  it.skipIf(!existsSync('/proc/self'))('run: --out under /proc, where no folder can be made (exit 2, at once: no endless retry)', () => {
    const recipe = recipeIn(base());
    const r = edgewise(['run', recipe, '--out', '/proc/edgewise-test-out', '--error-solves', '0', '--quiet']);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr).toBe('edgewise: /proc/edgewise-test-out/field.npy: cannot be written: a folder on the way cannot be made there; choose another folder with --out\n');
  });

  it('run: a recipe path that goes through a regular file (exit 2)', () => {
    const dir = base();
    const recipe = recipeIn(dir);
    const out = join(dir, 'out');
    const r = edgewise(['run', join(recipe, 'x.json'), '--out', out, '--quiet']);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr).toBe(`edgewise: ${recipe}/x.json: cannot be read: ${recipe} is a file, not a folder; check the path\n`);
    expect(existsSync(out)).toBe(false);
  });
});

describe('fileSystemError: what each file-system error says, and whose fault it is', () => {
  const error = (code: string) => Object.assign(new Error(`${code}: from the system`), { code });
  const CASES: [code: string, access: 'read' | 'write', line: string, kind: typeof InputError | typeof EnvironmentError][] = [
    ['EACCES', 'write', 'out/field.npy: cannot be written: permission denied; choose a folder you may write to with --out, or change its permissions', InputError],
    ['EACCES', 'read', "out/field.npy: cannot be read: permission denied; check the file's permissions", InputError],
    ['EPERM', 'write', 'out/field.npy: cannot be written: operation not permitted; choose a folder you may write to with --out, or change its permissions', InputError],
    ['EROFS', 'write', 'out/field.npy: cannot be written: the file system is read-only; choose a folder on a writable disk with --out', InputError],
    ['EISDIR', 'read', 'out/field.npy: cannot be read: it is a folder, not a file; give the file inside it', InputError],
    // No file in the way on disk (the path does not exist): the cause in general words.
    ['ENOTDIR', 'write', 'out/field.npy: cannot be written: a part of the path is a file, not a folder; move that file away, or choose another folder with --out', InputError],
    ['ENOSPC', 'write', 'out/field.npy: cannot be written: no space left on device; free some space, or choose a folder on another disk with --out', EnvironmentError],
    ['EDQUOT', 'write', 'out/field.npy: cannot be written: disk quota exceeded; free some space, or choose a folder on another disk with --out', EnvironmentError],
  ];
  for (const [code, access, line, kind] of CASES) {
    it(`${code} while ${access === 'read' ? 'reading' : 'writing'}: ${kind.name}`, () => {
      const mapped = fileSystemError(error(code), access, 'out/field.npy');
      expect(mapped).toBeInstanceOf(kind);
      expect(mapped?.message).toBe(line);
    });
  }

  it('an error it does not know (EIO), or one that is not from the file system: null, for the caller to rethrow', () => {
    expect(fileSystemError(error('EIO'), 'write', 'out/field.npy')).toBeNull();
    expect(fileSystemError(new Error('plain'), 'write', 'out/field.npy')).toBeNull();
    expect(fileSystemError(null, 'read', 'out/field.npy')).toBeNull();
  });

  it('a file-system error that reaches main() unnamed: ENOSPC from a write call is the machine (exit 1), EACCES from a read call the input (exit 2)', () => {
    const full = strayFileSystemError(Object.assign(new Error('ENOSPC: no space left on device, mkdir'), { code: 'ENOSPC', syscall: 'mkdir', path: 'out/run-0001' }));
    expect(full).toBeInstanceOf(EnvironmentError);
    expect(full?.message).toBe('out/run-0001: cannot be written: no space left on device; free some space, or choose a folder on another disk with --out');
    const denied = strayFileSystemError(Object.assign(new Error('EACCES: permission denied, scandir'), { code: 'EACCES', syscall: 'scandir', path: 'shards' }));
    expect(denied).toBeInstanceOf(InputError);
    expect(denied?.message).toBe("shards: cannot be read: permission denied; check the file's permissions");
    // A missing file the program itself expects is an internal failure, left as it is.
    expect(strayFileSystemError(Object.assign(new Error('ENOENT'), { code: 'ENOENT', syscall: 'open', path: 'dist/x' }))).toBeNull();
  });
});
