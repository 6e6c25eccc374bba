import * as realFs from 'node:fs';
import { join, resolve, sep } from 'node:path';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { EnvironmentError, InputError } from '../../packages/cli/src/errors.ts';
import { inside, writeAtomic } from '../../packages/cli/src/files.ts';
import { edgewise, REPO, tempDir } from '../support/cli.ts';

/**
 * Where the CLI writes: only inside the chosen folder, and never a half-written file in place
 * of a whole one. Failures of the file system are simulated by wrapping node:fs: the wrapper
 * passes every call through unless a test arms it.
 */
const fault = vi.hoisted(() => ({ write: null as null | 'half' | 'denied', rename: false }));
vi.mock('node:fs', async (importOriginal) => {
  const fs = await importOriginal<typeof import('node:fs')>();
  const wrapped = {
    ...fs,
    writeFileSync: (path: realFs.PathOrFileDescriptor, data: string | NodeJS.ArrayBufferView, ...rest: unknown[]) => {
      const bytes = typeof data === 'string' ? Buffer.from(data) : Buffer.from(data.buffer, data.byteOffset, data.byteLength);
      if (fault.write === 'half' && String(path).endsWith('.tmp') && bytes.length > 0) {
        // A disk that fills up halfway through: part of the data lands, then the write fails
        // (an empty file, the check that --out can be written, still fits).
        fs.writeFileSync(path, bytes.subarray(0, bytes.length >> 1));
        throw Object.assign(new Error('ENOSPC: no space left on device, write'), { code: 'ENOSPC' });
      }
      if (fault.write === 'denied' && String(path).endsWith('.tmp')) {
        // What a folder the user may not write to answers (root is not refused, so it is simulated).
        throw Object.assign(new Error(`EACCES: permission denied, open '${path}'`), { code: 'EACCES', syscall: 'open', path: String(path) });
      }
      return (fs.writeFileSync as (...a: unknown[]) => void)(path, data, ...rest);
    },
    renameSync: (from: realFs.PathLike, to: realFs.PathLike) => {
      if (fault.rename) throw Object.assign(new Error(`EIO: i/o error, rename '${from}' -> '${to}'`), { code: 'EIO' });
      return fs.renameSync(from, to);
    },
  };
  return { ...wrapped, default: wrapped };
});

afterEach(() => {
  fault.write = null;
  fault.rename = false;
});

function walk(dir: string, out: string[] = []): string[] {
  for (const entry of realFs.readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, entry.name);
    if (entry.isDirectory()) walk(p, out);
    else out.push(p);
  }
  return out;
}

describe('inside(): a name cannot climb out of the folder', () => {
  const root = resolve(tempDir('edgewise-inside-'));
  // Names that resolve above or beside root, each by a different route.
  for (const name of ['..', '../x', 'a/../../x', `..${sep}..${sep}etc${sep}passwd`, 'a/b/../../../x', './../x']) {
    it(`refuses ${JSON.stringify(name)}`, () => {
      expect(() => inside(root, name)).toThrow(/refusing to write outside/);
    });
  }
  // Names that stay inside, with where they land (path.join semantics: an absolute name is taken relative to root).
  for (const [name, rel] of [['report.json', 'report.json'], ['a/../b.json', 'b.json'], ['./run-0001/field.npy', join('run-0001', 'field.npy')], ['/etc/passwd', join('etc', 'passwd')]] as const) {
    it(`keeps ${JSON.stringify(name)} inside, at ${rel}`, () => {
      expect(inside(root, name)).toBe(join(root, rel));
    });
  }
  it('a sibling folder whose name starts like root is outside', () => {
    // "/tmp/run" must not accept "/tmp/run-other/x": the check is on a path segment, not a prefix of text.
    expect(() => inside(root, `../${root.split(sep).pop()}-other/x`)).toThrow(/refusing to write outside/);
  });
});

describe('a run writes only inside --out', () => {
  it('every new file lies under the output folder', () => {
    const base = tempDir('edgewise-confined-');
    const recipe = join(base, 'recipe.json');
    realFs.copyFileSync(join(REPO, 'examples', 'base-resistor.json'), recipe);
    const out = join(base, 'deep', '..', 'out');
    const before = new Set(walk(base));
    const r = edgewise(['run', recipe, '--out', out, '--error-solves', '0', '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    const added = walk(base).filter((p) => !before.has(p));
    expect(added.length).toBeGreaterThan(0);
    for (const p of added) expect(p.startsWith(resolve(out) + sep), p).toBe(true);
    // No temporary is left behind by a run that finished.
    expect(added.filter((p) => p.endsWith('.tmp'))).toEqual([]);
  });
});

describe('writeAtomic: a failed write leaves the old file whole', () => {
  const OLD = 'old contents, whole\n';
  const NEW = `${'new contents '.repeat(10_000)}\n`;

  function setUp() {
    const dir = tempDir('edgewise-atomic-');
    const path = join(dir, 'report.json');
    realFs.writeFileSync(path, OLD);
    return { dir, path };
  }

  it('the disk fills halfway through: one line naming the file, cause and remedy; the old file is as it was, no temporary is left', () => {
    const { dir, path } = setUp();
    fault.write = 'half';
    expect(() => writeAtomic(path, NEW)).toThrow(new EnvironmentError(
      `${path}: cannot be written: no space left on device; free some space, or choose a folder on another disk with --out`));
    expect(realFs.readFileSync(path, 'utf8')).toBe(OLD);
    expect(realFs.readdirSync(dir)).toEqual(['report.json']);
  });

  it('the rename fails: the old file is as it was, no temporary is left', () => {
    const { dir, path } = setUp();
    fault.rename = true;
    expect(() => writeAtomic(path, NEW)).toThrow(new EnvironmentError(
      `${path}: cannot be written: input/output error: the disk or its connection failed; check the disk, or choose a folder on another disk with --out`));
    expect(realFs.readFileSync(path, 'utf8')).toBe(OLD);
    expect(realFs.readdirSync(dir)).toEqual(['report.json']);
  });

  it('the target is a folder: nothing in it changes, no temporary is left', () => {
    const { dir } = setUp();
    const target = join(dir, 'field.npy');
    realFs.mkdirSync(target);
    realFs.writeFileSync(join(target, 'keep'), OLD);
    expect(() => writeAtomic(target, NEW)).toThrow(new InputError(
      `${target}: cannot be written: it is a folder, not a file; move that folder away, or choose another folder with --out`));
    expect(realFs.readFileSync(join(target, 'keep'), 'utf8')).toBe(OLD);
    expect(realFs.readdirSync(dir).sort()).toEqual(['field.npy', 'report.json']);
  });

  // Permissions do not stop root, so this one runs only as another user.
  it.skipIf(process.getuid?.() === 0)('a read-only folder: the old file is as it was', () => {
    const { dir, path } = setUp();
    realFs.chmodSync(dir, 0o555);
    try {
      expect(() => writeAtomic(path, NEW)).toThrow(new InputError(
        `${path}: cannot be written: permission denied; choose a folder you may write to with --out, or change its permissions`));
      expect(realFs.readFileSync(path, 'utf8')).toBe(OLD);
      expect(realFs.readdirSync(dir)).toEqual(['report.json']);
    } finally {
      realFs.chmodSync(dir, 0o755);
    }
  });

  it('with no fault the new contents replace the old whole (the wrapper is transparent)', () => {
    const { dir, path } = setUp();
    writeAtomic(path, NEW);
    expect(realFs.readFileSync(path, 'utf8')).toBe(NEW);
    expect(realFs.readdirSync(dir)).toEqual(['report.json']);
  });
});

describe('main(): a write the file system refuses ends in one line and its exit code, and leaves no file half written', () => {
  /** Runs the CLI's main() in this process (so that the wrapped node:fs applies) and returns its exit code and stderr. */
  async function runMain(args: string[]) {
    const { main } = await import('../../packages/cli/src/main.ts');
    const written: string[] = [];
    const spy = vi.spyOn(process.stderr, 'write').mockImplementation((chunk: string | Uint8Array) => { written.push(String(chunk)); return true; });
    try {
      return { code: await main(args), stderr: written.join('') };
    } finally {
      spy.mockRestore();
    }
  }

  function setUp() {
    const dir = tempDir('edgewise-main-fs-');
    const recipe = join(dir, 'recipe.json');
    realFs.copyFileSync(join(REPO, 'examples', 'base-resistor.json'), recipe);
    return { recipe, out: resolve(dir, 'out') };
  }

  it('disk full (ENOSPC): exit 1, no stack; the file half written by the disk is removed', async () => {
    const { recipe, out } = setUp();
    fault.write = 'half';
    const r = await runMain(['run', recipe, '--out', out, '--quiet', '--error-solves', '0']);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe(`edgewise: ${out}/field.npy: cannot be written: no space left on device; free some space, or choose a folder on another disk with --out\n`);
    expect(walk(out)).toEqual([]);
  });

  it('a failing disk (EIO): exit 1, one line, no stack; no temporary is left', async () => {
    const { recipe, out } = setUp();
    fault.rename = true;
    const r = await runMain(['run', recipe, '--out', out, '--quiet', '--error-solves', '0']);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe(`edgewise: ${out}/field.npy: cannot be written: input/output error: the disk or its connection failed; ` +
      'check the disk, or choose a folder on another disk with --out\n');
    expect(walk(out)).toEqual([]);
  });

  it('permission denied (EACCES): exit 2, the path given is at fault, found before the solve (the folder is named, not a file of the results)', async () => {
    const { recipe, out } = setUp();
    fault.write = 'denied';
    const r = await runMain(['run', recipe, '--out', out, '--quiet', '--error-solves', '0']);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(`edgewise: ${out}: cannot be written: permission denied; choose a folder you may write to with --out, or change its permissions\n`);
    expect(walk(out)).toEqual([]);
  });
});
