import * as realFs from 'node:fs';
import { join, resolve, sep } from 'node:path';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { inside, writeAtomic } from '../../packages/cli/src/files.ts';
import { edgewise, REPO, tempDir } from '../support/cli.ts';

/**
 * Where the CLI writes: only inside the chosen folder, and never a half-written file in place
 * of a whole one. Failures of the file system are simulated by wrapping node:fs: the wrapper
 * passes every call through unless a test arms it.
 */
const fault = vi.hoisted(() => ({ write: null as null | 'half', rename: false }));
vi.mock('node:fs', async (importOriginal) => {
  const fs = await importOriginal<typeof import('node:fs')>();
  const wrapped = {
    ...fs,
    writeFileSync: (path: realFs.PathOrFileDescriptor, data: string | NodeJS.ArrayBufferView, ...rest: unknown[]) => {
      if (fault.write === 'half' && String(path).endsWith('.tmp')) {
        // A disk that fills up halfway through: part of the data lands, then the write fails.
        const bytes = typeof data === 'string' ? Buffer.from(data) : Buffer.from(data.buffer, data.byteOffset, data.byteLength);
        fs.writeFileSync(path, bytes.subarray(0, bytes.length >> 1));
        throw Object.assign(new Error('ENOSPC: no space left on device, write'), { code: 'ENOSPC' });
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

  it('the disk fills halfway through: the error comes back, the old file is as it was, no temporary is left', () => {
    const { dir, path } = setUp();
    fault.write = 'half';
    expect(() => writeAtomic(path, NEW)).toThrow(/ENOSPC/);
    expect(realFs.readFileSync(path, 'utf8')).toBe(OLD);
    expect(realFs.readdirSync(dir)).toEqual(['report.json']);
  });

  it('the rename fails: the old file is as it was, no temporary is left', () => {
    const { dir, path } = setUp();
    fault.rename = true;
    expect(() => writeAtomic(path, NEW)).toThrow(/EIO/);
    expect(realFs.readFileSync(path, 'utf8')).toBe(OLD);
    expect(realFs.readdirSync(dir)).toEqual(['report.json']);
  });

  it('the target is a folder: nothing in it changes, no temporary is left', () => {
    const { dir } = setUp();
    const target = join(dir, 'field.npy');
    realFs.mkdirSync(target);
    realFs.writeFileSync(join(target, 'keep'), OLD);
    expect(() => writeAtomic(target, NEW)).toThrow();
    expect(realFs.readFileSync(join(target, 'keep'), 'utf8')).toBe(OLD);
    expect(realFs.readdirSync(dir).sort()).toEqual(['field.npy', 'report.json']);
  });

  // Permissions do not stop root, so this one runs only as another user.
  it.skipIf(process.getuid?.() === 0)('a read-only folder: the old file is as it was', () => {
    const { dir, path } = setUp();
    realFs.chmodSync(dir, 0o555);
    try {
      expect(() => writeAtomic(path, NEW)).toThrow(/EACCES|EPERM/);
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
