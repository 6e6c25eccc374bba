import { copyFileSync, existsSync, mkdirSync, readdirSync, readFileSync, realpathSync, symlinkSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { EnvironmentError, fileSystemError, InputError } from '../../packages/cli/src/errors.ts';
import { inside } from '../../packages/cli/src/files.ts';
import { strayFileSystemError } from '../../packages/cli/src/main.ts';
import { repeatedJsonKey } from '../../packages/cli/src/read-recipe.ts';
import { csvFields, edgewise, REPO, tempDir } from '../support/cli.ts';

/**
 * Hostile paths: links under an output folder that lead out of it, output folders that cannot
 * be written, and recipes that give a key twice. Each answer is one line with its exit code;
 * expected lines are the messages the program is meant to give, built from the paths of the case.
 * Temporary folders are taken by their real path, so that the paths in the messages are those
 * the program sees.
 */
const base = () => realpathSync(tempDir('edgewise-paths-'));

/** A file outside the output folder, holding "keep\n", and a link to it at `link` (its folders made). */
function linkedFileOutside(dir: string, link: string): string {
  const victim = join(dir, 'victim.json');
  writeFileSync(victim, 'keep\n');
  mkdirSync(dirname(link), { recursive: true });
  symlinkSync(victim, link);
  return victim;
}

function recipeIn(dir: string): string {
  const path = join(dir, 'recipe.json');
  copyFileSync(join(REPO, 'examples', 'base-resistor.json'), path);
  return path;
}

function lines(text: string): string[] {
  return text.split('\n').filter((l) => l !== '');
}

describe('inside(): a symbolic link under the folder cannot lead a write out of it', () => {
  it('a run folder that is a link to a folder outside', () => {
    const dir = base();
    mkdirSync(join(dir, 'out'));
    mkdirSync(join(dir, 'elsewhere'));
    symlinkSync(join(dir, 'elsewhere'), join(dir, 'out', 'run1'));
    expect(() => inside(join(dir, 'out'), 'run1/field.npy')).toThrow(new InputError(
      `refusing to write outside the output folder ${dir}/out: run1/field.npy (run1 leads to ${dir}/elsewhere through a symbolic link)`));
  });

  it('a link that leads to a place outside that does not exist yet', () => {
    const dir = base();
    mkdirSync(join(dir, 'out'));
    symlinkSync(join(dir, 'not-yet', 'deeper'), join(dir, 'out', 'run1'));
    expect(() => inside(join(dir, 'out'), 'run1/report.json')).toThrow(new InputError(
      `refusing to write outside the output folder ${dir}/out: run1/report.json (run1 leads to ${dir}/not-yet/deeper through a symbolic link)`));
    expect(existsSync(join(dir, 'not-yet'))).toBe(false);
  });

  it('a file that is a link to a file outside', () => {
    const dir = base();
    const victim = linkedFileOutside(dir, join(dir, 'out', 'report.json'));
    expect(() => inside(join(dir, 'out'), 'report.json')).toThrow(new InputError(
      `refusing to write outside the output folder ${dir}/out: report.json leads to ${victim} through a symbolic link`));
  });

  it('a relative link that climbs out (../../elsewhere)', () => {
    const dir = base();
    mkdirSync(join(dir, 'out', 'a'), { recursive: true });
    symlinkSync('../../elsewhere', join(dir, 'out', 'a', 'run1'));
    expect(() => inside(join(dir, 'out'), 'a/run1/x.npy')).toThrow(new InputError(
      `refusing to write outside the output folder ${dir}/out: a/run1/x.npy (a/run1 leads to ${dir}/elsewhere through a symbolic link)`));
  });

  it('links that lead round in a loop are refused, not followed without end', () => {
    const dir = base();
    mkdirSync(join(dir, 'out'));
    symlinkSync(join(dir, 'out', 'b'), join(dir, 'out', 'a'));
    symlinkSync(join(dir, 'out', 'a'), join(dir, 'out', 'b'));
    expect(() => inside(join(dir, 'out'), 'a/field.npy')).toThrow(new InputError(
      `refusing to write outside the output folder ${dir}/out: a/field.npy (symbolic links on the way lead round in a loop)`));
  });

  it('a link from one place under the folder to another under it is allowed', () => {
    const dir = base();
    mkdirSync(join(dir, 'out', 'real-run'), { recursive: true });
    symlinkSync(join(dir, 'out', 'real-run'), join(dir, 'out', 'run1'));
    expect(inside(join(dir, 'out'), 'run1/field.npy')).toBe(join(dir, 'out', 'run1', 'field.npy'));
  });

  it('an output folder that is itself a link is where the user sent the files: allowed', () => {
    const dir = base();
    mkdirSync(join(dir, 'storage'));
    symlinkSync(join(dir, 'storage'), join(dir, 'out'));
    expect(inside(join(dir, 'out'), 'run-0001/field.npy')).toBe(join(dir, 'out', 'run-0001', 'field.npy'));
  });

  it('an output folder that does not exist yet: its files are inside it', () => {
    const dir = base();
    expect(inside(join(dir, 'new', 'out'), 'run-0001/field.npy')).toBe(join(dir, 'new', 'out', 'run-0001', 'field.npy'));
  });
});

describe('the real binary: links under --out that lead outside are refused, nothing is written outside', () => {
  it('sweep: a run folder that is a link to a folder outside stops the sweep before anything is written (exit 2)', () => {
    const dir = base();
    const recipe = recipeIn(dir);
    const out = join(dir, 'out');
    const elsewhere = join(dir, 'elsewhere');
    mkdirSync(out);
    mkdirSync(elsewhere);
    symlinkSync(elsewhere, join(out, 'run-0001'));
    const r = edgewise(['sweep', recipe, '--widths', '4,5', '--out', out, '--jobs', '1', '--error-solves', '0', '--quiet']);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr).toBe(`edgewise: refusing to write outside the output folder ${out}: run-0001 leads to ${elsewhere} through a symbolic link\n`);
    expect(r.stdout).toBe('');
    expect(readdirSync(elsewhere)).toEqual([]);
    expect(readdirSync(out)).toEqual(['run-0001']);
  });

  it('sweep: a link inside a run folder is refused by the run that writes there; that run fails, the other finishes (exit 3)', () => {
    const dir = base();
    const recipe = recipeIn(dir);
    const out = join(dir, 'out');
    const victim = linkedFileOutside(dir, join(out, 'run-0001', 'report.json'));
    const r = edgewise(['sweep', recipe, '--widths', '4,5', '--out', out, '--jobs', '1', '--error-solves', '0', '--quiet']);
    expect(r.code, r.stderr).toBe(3);
    const error = `InputError: refusing to write outside the output folder ${out}: run-0001/report.json leads to ${victim} through a symbolic link`;
    expect(r.stdout).toContain(`\nrun 1 failed: ${error}\n`);
    expect(readFileSync(victim, 'utf8')).toBe('keep\n');
    const rows = readFileSync(join(out, 'sweep.csv'), 'utf8').trimEnd().split('\n').map(csvFields);
    const header = rows[0];
    expect(rows.slice(1).map((row) => [row[header.indexOf('status')], row[header.indexOf('error')]])).toEqual([['failed', error], ['ok', '']]);
    expect(existsSync(join(out, 'run-0002', 'report.json'))).toBe(true);
    // The failed run is not marked finished, so --resume redoes it.
    expect(existsSync(join(out, 'run-0001', 'recipe.json'))).toBe(false);
  });

  it('run: a report.json under --out that is a link to a file outside (exit 2, the file outside unchanged)', () => {
    const dir = base();
    const recipe = recipeIn(dir);
    const out = join(dir, 'out');
    const victim = linkedFileOutside(dir, join(out, 'report.json'));
    const r = edgewise(['run', recipe, '--out', out, '--error-solves', '0', '--quiet']);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr).toBe(`edgewise: refusing to write outside the output folder ${out}: report.json leads to ${victim} through a symbolic link\n`);
    expect(readFileSync(victim, 'utf8')).toBe('keep\n');
  });
});

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
    expect(r.stderr).toBe(`edgewise: ${file}/out: cannot be written: ${file} is a file, not a folder; move that file away, or choose another folder with --out\n`);
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
    expect(r.stderr).toBe('edgewise: /proc/edgewise-test-out: cannot be written: a folder on the way cannot be made there; choose another folder with --out\n');
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
    ['EIO', 'read', 'out/field.npy: cannot be read: input/output error: the disk or its connection failed; check the disk, then try again', EnvironmentError],
  ];
  for (const [code, access, line, kind] of CASES) {
    it(`${code} while ${access === 'read' ? 'reading' : 'writing'}: ${kind.name}`, () => {
      const mapped = fileSystemError(error(code), access, 'out/field.npy');
      expect(mapped).toBeInstanceOf(kind);
      expect(mapped?.message).toBe(line);
    });
  }

  it('an error it does not know (EBUSY), or one that is not from the file system: null, for the caller to rethrow', () => {
    expect(fileSystemError(error('EBUSY'), 'write', 'out/field.npy')).toBeNull();
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

describe('a key given twice in a recipe: one line naming the key, where it sits and both places, exit 2', () => {
  const TEXT = readFileSync(join(REPO, 'examples', 'base-resistor.json'), 'utf8');

  /** Line and column (from 1) of the n-th (from 0) occurrence of `find` in `text`. */
  function at(text: string, find: string, n: number): string {
    let offset = -1;
    for (let k = 0; k <= n; k++) offset = text.indexOf(find, offset + 1);
    if (offset < 0) throw new Error(`test set-up: ${find} is not in the text ${n + 1} times`);
    const before = text.slice(0, offset).split('\n');
    return `line ${before.length}, column ${before[before.length - 1].length + 1}`;
  }

  /** Each case: the file, the key, where it sits, and the text and occurrence (from 0) of each of its two places. */
  const CASES: { name: string; file: string; text: string; key: string; place: string; first: [string, number]; again: [string, number] }[] = [
    { name: 'JSON, at the top level', file: 'top.json', key: 'title', place: 'at the top level', first: ['"title"', 0], again: ['"title"', 1],
      text: TEXT.replace('"substrate"', '"title": "again",\n  "substrate"') },
    // Step 0 has its own "minutes": the first of step 1 is the second in the text.
    { name: 'JSON, in a step', file: 'step.json', key: 'minutes', place: 'in steps[1]', first: ['"minutes"', 1], again: ['"minutes"', 2],
      text: TEXT.replace('"minutes": 60 }', '"minutes": 60,\n      "minutes": 90 }') },
    { name: 'JSON, one level down, written with an escape ("\\u0064opant" is "dopant")', file: 'escape.json', key: 'dopant', place: 'in substrate',
      first: ['"dopant"', 0], again: ['"\\u0064opant"', 0], text: TEXT.replace('"concentrationCm3"', '"\\u0064opant": "N", "concentrationCm3"') },
    { name: 'YAML, at the top level', file: 'top.yaml', key: 'title', place: 'at the top level', first: ['title', 0], again: ['title', 1],
      text: 'title: a\nsubstrate: {dopant: P, concentrationCm3: 1e15}\ntitle: b\n' },
    { name: 'YAML, in a step, once quoted', file: 'step.yaml', key: 'minutes', place: 'in steps[1]', first: ['minutes', 1], again: ['"minutes"', 0],
      text: 'steps:\n  - kind: predeposition\n    minutes: 30\n  - kind: drive-in\n    minutes: 60\n    "minutes": 90\n' },
    { name: 'YAML, a number key and the same as text (both become "1")', file: 'number.yaml', key: '1', place: 'in dopants', first: ['1:', 0], again: ['"1"', 0],
      text: 'dopants:\n  1: {type: donor}\n  "1": {type: acceptor}\n' },
  ];
  const dir = base();
  for (const c of CASES) {
    it(c.name, () => {
      const path = join(dir, c.file);
      writeFileSync(path, c.text);
      const out = join(dir, `out-${c.file}`);
      const r = edgewise(['run', path, '--out', out, '--quiet']);
      expect(r.code, r.stderr).toBe(2);
      const line = `edgewise: ${path}: the key ${JSON.stringify(c.key)} appears twice ${c.place} (${at(c.text, ...c.again)}; first at ${at(c.text, ...c.first)})`;
      expect(lines(r.stderr)).toEqual([line]);
      expect(existsSync(out)).toBe(false);
    });
  }

  it('the scanner: paths through lists and objects, keys in strings and escapes not mistaken for keys', () => {
    expect(repeatedJsonKey('{"a":[{"b":1},{"b":1,"c":[[{"d":1,"d":2}]]}]}')).toMatchObject({ path: ['a', 1, 'c', 0, 0], key: 'd' });
    // The same key in sibling objects, or at two levels, is not given twice.
    expect(repeatedJsonKey('[{"a":1},{"a":2},{"a":{"a":3}}]')).toBeNull();
    // Quotes, braces and commas inside strings are text, not structure.
    expect(repeatedJsonKey('{"t":"\\"a\\":1, {\\"a\\":2}","a":1,"q\\\\":"}"}')).toBeNull();
    expect(repeatedJsonKey('{"t":"x\\\\","t":"y"}')).toMatchObject({ path: [], key: 't', first: 1, again: 11 });
    // Nesting far past what a recipe holds is scanned without recursion.
    expect(repeatedJsonKey(`${'['.repeat(100_000)}{"k":1,"k":2}${']'.repeat(100_000)}`)?.path).toHaveLength(100_000);
  });
});
