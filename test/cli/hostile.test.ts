import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { get as httpGet } from 'node:http';
import { createServer, type AddressInfo } from 'node:net';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { temporaryName } from '../../packages/cli/src/files.ts';
import { startViewServer } from '../../packages/cli/src/view-server.ts';
import { edgewise, tempDir } from '../support/cli.ts';

/**
 * Hostile input to the real binary: each case is a file (or an option) and the one line the
 * program must answer with, exit code 2, nothing written. Expected lines are the messages
 * the program is meant to give; where a line or column appears, it is derived from the text
 * of the case, not copied from a run.
 */
const dir = tempDir('edgewise-hostile-');

/** The base recipe as text: an invented predeposition and drive-in (the README's example). */
const TEXT = '{"title":"hostile-input base (invented)","substrate":{"dopant":"P","concentrationCm3":1e15},' +
  '"crossSection":{"widthUm":24},"mask":{"windows":[[8,16]]},"steps":[' +
  '{"kind":"predeposition","dopant":"B","surfaceConcentrationCm3":1e20,"temperatureC":950,"minutes":30},' +
  '{"kind":"drive-in","temperatureC":1100,"minutes":60}]}';

/** The base recipe's JSON with one value's text replaced (numbers JSON.stringify cannot write, like 1e999). */
function withText(find: string, replace: string): string {
  if (!TEXT.includes(find)) throw new Error(`test set-up: ${find} is not in the base recipe`);
  return TEXT.replace(find, replace);
}

/** The base recipe's JSON with one more top-level key written as raw text. */
function withKey(raw: string): string {
  return `${TEXT.slice(0, -1)},${raw}}`;
}

const nested = (depth: number) => `${'['.repeat(depth)}${']'.repeat(depth)}`;

/** 7 levels of 9 aliases each: 9^7 ≈ 4.8 million strings once expanded (a "billion laughs"). */
function aliasBomb(): string {
  const lines = ['a: &a ["x","x","x","x","x","x","x","x","x"]'];
  const names = 'abcdefg';
  for (let k = 1; k < names.length; k++) lines.push(`${names[k]}: &${names[k]} [${Array(9).fill(`*${names[k - 1]}`).join(',')}]`);
  return `${lines.join('\n')}\n`;
}

interface Case {
  name: string;
  file: string;
  /** file content; omitted: the case makes the path itself (or leaves it missing) */
  content?: string | Uint8Array;
  make?: (path: string) => void;
  args?: string[];
  /** the line after "edgewise: " ({file} is the recipe path) */
  line: string;
}

const trailing = `${TEXT} xyz`;
const truncated = `{\n  "title": "x"\n`;
const latin1 = '{"title": "caf\xe9"}';

const CASES: Case[] = [
  // Malformed text
  { name: 'truncated JSON', file: 'truncated.json', content: truncated,
    // The text ends on the line after the last newline, at its first column.
    line: `{file}: is not valid JSON: expected ',' or '}' after property value at line 3, column 1` },
  { name: 'trailing garbage after the JSON', file: 'trailing.json', content: trailing,
    line: `{file}: is not valid JSON: more text after the recipe ends at line 1, column ${trailing.indexOf('xyz') + 1}` },
  { name: 'a bare word where a value goes', file: 'token.json', content: '{"title": tru}', line: '{file}: is not valid JSON: unexpected "}"' },
  { name: 'malformed YAML', file: 'flow.yaml', content: 'title: [1, 2\nsubstrate: 3\n',
    line: '{file}: is not valid YAML: flow sequence in block collection must be sufficiently indented and end with a ] at line 2, column 1' },
  { name: 'a YAML key given twice', file: 'twice.yaml', content: 'title: a\ntitle: b\n', line: '{file}: the key "title" appears twice at the top level (line 2, column 1; first at line 1, column 1)' },
  { name: 'two YAML documents', file: 'two.yaml', content: 'title: a\n---\ntitle: b\n', line: '{file}: is not valid YAML: holds 2 documents (each "---" line starts one); a recipe is one' },
  { name: 'a YAML tag of its own', file: 'tag.yaml', content: 'title: !shell ls\n', line: '{file}: is not valid YAML: unresolved tag: !shell at line 1, column 8' },
  { name: 'YAML binary data', file: 'binary.yaml', content: 'title: !!binary aGVsbG8=\n',
    line: '{file}: title holds a Buffer value (a YAML tag such as !!binary or !!set), which a recipe cannot' },
  { name: 'a YAML alias bomb', file: 'bomb.yaml', content: aliasBomb(),
    line: '{file}: is not valid YAML: its aliases (*name) would expand beyond what a recipe can hold (at most 100 expansions)' },
  { name: 'a YAML alias inside its own anchor', file: 'cycle.yaml', content: 'title: &t [*t]\n', line: '{file}: title[0] contains itself (a YAML alias inside its own anchor)' },

  // Nesting
  { name: '10,000 nested JSON arrays', file: 'nested.json', content: nested(10_000),
    line: '{file}: [0][0][0][0][0][0]… is nested more than 32 levels deep; a recipe needs at most 5' },
  { name: '10,000 nested arrays as a step', file: 'nested-step.json', content: withText('"steps":[', `"steps":[${nested(10_000)},`),
    line: '{file}: steps[0][0][0][0][0]… is nested more than 32 levels deep; a recipe needs at most 5' },
  { name: '10,000 nested YAML flow lists', file: 'nested.yaml', content: `title: ${nested(10_000)}\n`,
    line: '{file}: is not valid YAML: nested too deeply to read (a recipe needs at most 5 levels)' },

  // Numbers at and past the ends of float64
  { name: '1e308 where a concentration goes', file: 'huge.json', content: withText('1e15', '1e308'),
    line: 'bad recipe: substrate.concentrationCm3: must be a number from 1e10 to 1e21 cm^-3 (got 1e308)' },
  { name: '1e999 (infinite once read)', file: 'inf.json', content: withText('1e15', '1e999'),
    line: 'bad recipe: substrate.concentrationCm3: must be a number from 1e10 to 1e21 cm^-3 (got Infinity)' },
  { name: '5e-324, the smallest double', file: 'tiny.json', content: withText('1e15', '5e-324'),
    line: 'bad recipe: substrate.concentrationCm3: must be a number from 1e10 to 1e21 cm^-3 (got 5e-324)' },
  { name: '-1e308 minutes', file: 'negative.json', content: withText('"minutes":60', '"minutes":-1e308'),
    line: 'bad recipe: steps[1].minutes: must be a number above 0 and up to 1e5 minutes (got -1e308)' },
  { name: 'YAML .nan', file: 'nan.yaml', content: 'substrate: {dopant: P, concentrationCm3: .nan}\n',
    line: 'bad recipe: substrate.concentrationCm3: must be a number from 1e10 to 1e21 cm^-3 (got NaN)' },
  { name: 'a column count of 1e308', file: 'columns.json', content: withKey('"mesh":{"columns":1e308}'),
    line: 'bad recipe: mesh.columns: must be a whole number from 8 to 4000 (got 1e308)' },

  // Keys that reach an object's prototype
  { name: '__proto__ at the top level', file: 'proto.json', content: withKey('"__proto__":{"polluted":true}'),
    line: 'bad recipe: recipe: unknown key "__proto__" (JavaScript reserves it; no recipe key is named so)' },
  { name: '__proto__ as a dopant name', file: 'proto-dopant.json', content: withKey('"dopants":{"__proto__":{"type":"donor","D0Cm2PerS":1,"EaEv":3}}'),
    line: 'bad recipe: dopants: unknown key "__proto__" (JavaScript reserves it; no recipe key is named so)' },
  { name: 'constructor in diffusion.species', file: 'ctor.json', content: withKey('"diffusion":{"species":{"constructor":"intrinsic"}}'),
    line: 'bad recipe: diffusion.species: unknown key "constructor" (JavaScript reserves it; no recipe key is named so)' },
  { name: 'prototype in the cross-section', file: 'prototype.json', content: withText('"widthUm":24', '"widthUm":24,"prototype":{}'),
    line: 'bad recipe: crossSection: unknown key "prototype" (JavaScript reserves it; no recipe key is named so)' },
  { name: '__proto__ in YAML', file: 'proto.yaml', content: 'title: x\n__proto__: {polluted: true}\n',
    line: 'bad recipe: recipe: unknown key "__proto__" (JavaScript reserves it; no recipe key is named so)' },
  { name: 'a step dopant named toString', file: 'tostring.json', content: withText('"dopant":"B"', '"dopant":"toString"'),
    line: 'bad recipe: steps[0].dopant: must not be "toString": JavaScript reserves that name; choose another' },

  // Bytes and files
  { name: 'Latin-1 bytes (not UTF-8)', file: 'latin1.json', content: Buffer.from(latin1, 'latin1'),
    // é is 0xe9 in Latin-1, one byte, and not a UTF-8 sequence on its own; bytes count from 1
    line: `{file}: is not UTF-8 text (byte ${latin1.indexOf('\xe9') + 1} is 0xe9); save it as UTF-8` },
  { name: 'UTF-16 with its byte-order mark', file: 'utf16.json', content: Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(TEXT, 'utf16le')]),
    line: '{file}: is not UTF-8 text (byte 1 is 0xff); save it as UTF-8' },
  { name: 'an empty file', file: 'empty.json', content: '', line: '{file}: is empty' },
  { name: 'nothing but white space', file: 'blank.json', content: ' \n\t\n', line: '{file}: is empty' },
  { name: 'a YAML file of comments only', file: 'comments.yaml', content: '# nothing here\n', line: '{file}: is empty (nothing but comments)' },
  { name: 'a folder instead of a file', file: 'folder.json', make: (p) => mkdirSync(p), line: '{file}: is a folder, not a recipe file' },
  { name: 'a file that is not there', file: 'missing.json', line: '{file}: no such recipe file' },
  { name: 'a file over 1 MiB', file: 'large.json', content: `${TEXT.slice(0, -1)},"title":"${'x'.repeat(1 << 20)}"}`,
    line: `{file}: ${TEXT.length + 11 + (1 << 20)} bytes is larger than a recipe can be (at most 1048576)` },
  { name: 'the phosphorus kink switched on for a boron recipe', file: 'kink.json', content: `${TEXT.slice(0, -1)},"physics":{"phosphorusKink":true}}`,
    line: 'bad recipe: physics.phosphorusKink: applies to phosphorus (P), which no step introduces (introduced: B); set it false or leave it out' },
  { name: 'a list, not an object', file: 'list.json', content: '[1, 2, 3]',
    line: 'bad recipe: recipe: must be an object with schema, title, substrate, crossSection, mask, diffusion, physics, dopants, mesh, numerics, sweep, electrical, steps (got a list of 3)' },

  // Options
  { name: '--max-mesh-points that is not a number', file: 'ok.json', content: TEXT, args: ['--max-mesh-points', 'lots'],
    line: '--max-mesh-points: must be a whole number from 1 to 1e9 mesh points, like 4000000 or 4e6 (default 4e6; got "lots")' },
  { name: '--max-point-steps of zero', file: 'ok.json', content: TEXT, args: ['--max-point-steps', '0'],
    line: '--max-point-steps: must be a whole number from 1 to 1e15 point-steps (mesh points × time steps), like 4000000 or 4e6 (default 1e10; got "0")' },
  { name: '--max-mesh-points beyond what a process can hold', file: 'ok.json', content: TEXT, args: ['--max-mesh-points', '1e12'],
    line: '--max-mesh-points: must be a whole number from 1 to 1e9 mesh points, like 4000000 or 4e6 (default 4e6; got "1e12")' },
  { name: '--max-mesh-points with a value that looks like an option', file: 'ok.json', content: TEXT, args: ['--max-mesh-points', '-5'],
    line: 'run: option --max-mesh-points needs a value; one that starts with "-" is written --max-mesh-points=-…' },
  { name: 'an option run does not have', file: 'ok.json', content: TEXT, args: ['--fast'], line: 'run: unknown option --fast' },
];

function usageSuffix(line: string): boolean {
  return line.startsWith('run: ');
}

describe('hostile input: one line, exit 2, nothing written', () => {
  CASES.forEach((c, k) => {
    it(c.name, () => {
      const path = join(dir, c.file);
      if (c.content !== undefined && !existsSync(path)) writeFileSync(path, c.content);
      c.make?.(path);
      const out = join(dir, `out-${k}`);
      const r = edgewise(['run', path, '--out', out, '--quiet', ...(c.args ?? [])]);
      expect(r.code, r.stderr).toBe(2);
      const lines = r.stderr.split('\n').filter((l) => l !== '');
      expect(lines, r.stderr).toHaveLength(1);
      const expected = c.line.replaceAll('{file}', path);
      // parseArgs errors carry the usage after the message (main.ts); the rest is the whole line.
      if (usageSuffix(expected)) expect(lines[0].startsWith(`edgewise ${expected} (usage: edgewise run `), lines[0]).toBe(true);
      else expect(lines[0]).toBe(`edgewise: ${expected}`);
      expect(r.stdout).toBe('');
      expect(existsSync(out), 'the output folder').toBe(false);
    });
  });

  it.skipIf(!existsSync('/dev/zero'))('an endless source (/dev/zero): refused before it is read', () => {
    const out = join(dir, 'out-zero');
    const r = edgewise(['run', '/dev/zero', '--out', out]);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('edgewise: /dev/zero: is a device, not a regular file; save the recipe to a file and give that\n');
    expect(existsSync(out)).toBe(false);
  });

  it('a sweep reads its recipe the same way', () => {
    const path = join(dir, 'sweep-proto.json');
    writeFileSync(path, withKey('"__proto__":{"polluted":true}'));
    const out = join(dir, 'out-sweep-proto');
    const r = edgewise(['sweep', path, '--widths', '4:4:8', '--out', out, '--quiet']);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('edgewise: bad recipe: recipe: unknown key "__proto__" (JavaScript reserves it; no recipe key is named so)\n');
    expect(existsSync(out)).toBe(false);
  });

  it('--out naming a file, not a folder', () => {
    const path = join(dir, 'out-is-file.json');
    writeFileSync(path, TEXT);
    const r = edgewise(['run', path, '--out', path, '--quiet']);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(`edgewise: --out ${path}: is a file, not a folder\n`);
  });
});

describe('work limits: refused before any field is allocated, saying what it would need', () => {
  const path = join(dir, 'limits.json');
  writeFileSync(path, TEXT);

  it('--max-mesh-points below the mesh the recipe needs', () => {
    const out = join(dir, 'out-mesh-limit');
    const r = edgewise(['run', path, '--out', out, '--max-mesh-points', '1000']);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    const m = /^edgewise: bad recipe: mesh: would need (\d+) mesh points \((\d+) × (\d+), about (\d+) MiB at the peak\), above the limit of 1000; lower mesh\.refine or raise the limit with --max-mesh-points N \(now 1000\)$/.exec(r.stderr.trim());
    expect(m, r.stderr).not.toBeNull();
    const [need, columns, rows, mib] = m!.slice(1).map(Number);
    // The count is the product it states, above the limit; memory is the measured peak's fit,
    // 75 MiB + 130 bytes a point, rounded up (plan-terms.ts, peakMemoryMiB).
    expect(need).toBe(columns * rows);
    expect(need).toBeGreaterThan(1000);
    expect(mib).toBe(Math.ceil(75 + (need * 130) / 2 ** 20));
    expect(existsSync(out)).toBe(false);
  });

  it('--max-point-steps below the work the recipe needs', () => {
    const out = join(dir, 'out-step-limit');
    const r = edgewise(['run', path, '--out', out, '--max-point-steps', '1e5', '--quiet']);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    const m = /^edgewise: bad recipe: numerics: would take (\d+) time steps on (\d+) mesh points \(([\d.e+]+) point-steps, .*\), above the limit of 1\.00e5; lower mesh\.refine or raise numerics\.stepGrowth, or raise the limit with --max-point-steps N \(now 1e5\)$/.exec(r.stderr.trim());
    expect(m, r.stderr).not.toBeNull();
    const [steps, points, work] = m!.slice(1).map(Number);
    // The stated work is steps × points to the 3 digits printed, and above the limit.
    expect(Math.abs(work - steps * points) / (steps * points)).toBeLessThan(5e-3);
    expect(steps * points).toBeGreaterThan(1e5);
    expect(existsSync(out)).toBe(false);
  });

  it('raising a limit lets the same recipe run: the limit, not the recipe, stopped it', () => {
    const out = join(dir, 'out-raised');
    const low = edgewise(['run', path, '--out', join(dir, 'out-low'), '--max-mesh-points', '1000', '--quiet']);
    const need = Number(/would need (\d+) mesh points/.exec(low.stderr)?.[1]);
    expect(need).toBeGreaterThan(1000);
    const r = edgewise(['run', path, '--out', out, '--max-mesh-points', String(need), '--error-solves', '0', '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    expect(existsSync(join(out, 'report.json'))).toBe(true);
  });

  it('a sweep checks every run against --max-mesh-points before writing anything', () => {
    const out = join(dir, 'out-sweep-limit');
    const r = edgewise(['sweep', path, '--widths', '4:4:8', '--out', out, '--max-mesh-points', '1000', '--quiet']);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/^edgewise: sweep run 1 \(windowWidthUm=4\): bad recipe: mesh: would need \d+ mesh points .* with --max-mesh-points N \(now 1000\)\n$/);
    expect(existsSync(out)).toBe(false);
  });
});

/**
 * Recipes at the edges of the schema's ranges that once ended in an internal error inside the
 * planner: each must now run (exit 0) or be refused in one line (exit 2). A recipe whose
 * diffusion length is tiny beside the cross-section is among them: its mesh is counted, and
 * refused, before any axis is built.
 */
describe('edge-of-range recipes that once failed inside the planner: planned, or refused in one line', () => {
  const KNOWN: [string, string][] = [
    ['a cross-section 1e-6 µm deep (one row)', withText('"widthUm":24', '"widthUm":24,"depthUm":1e-6')],
    ['one window over the whole of a narrow cross-section (one column)',
      withText('"crossSection":{"widthUm":24},"mask":{"windows":[[8,16]]}', '"crossSection":{"widthUm":0.5},"mask":{"windows":[[0,0.5]]}')],
    ['a window edge at 5e-324 µm (a cell of no width)', withText('[[8,16]]', '[[5e-324,8]]')],
    ['a surface spacing coarser than the depth the plan picks', withKey('"mesh":{"surfaceSpacingUm":5}')],
    ['a dopant that barely moves (D0 1e-200 cm²/s)', withKey('"dopants":{"Z":{"type":"acceptor","D0Cm2PerS":1e-200,"EaEv":10}}').replace('"dopant":"B"', '"dopant":"Z"')],
    ['a predeposition of 1e-300 minutes', withText('"minutes":30', '"minutes":1e-300')],
  ];
  KNOWN.forEach(([name, text], k) => {
    it(name, () => {
      const path = join(dir, `known-${k}.json`);
      writeFileSync(path, text);
      const r = edgewise(['run', path, '--out', join(dir, `out-known-${k}`), '--error-solves', '0', '--quiet']);
      expect([0, 2], r.stderr).toContain(r.code);
      if (r.code === 2) expect(r.stderr.trim().split('\n')).toHaveLength(1);
    });
  });
});

/**
 * Hostile input to every command, second round: each case is a command line (with what it
 * needs made first), its exit code and the one line it must answer with: on stderr after
 * "edgewise: " for a refusal, on stdout for a run that goes through.
 */
interface CommandCase {
  name: string;
  /** the command line after `edgewise`; `at` is this case's own folder */
  args: (at: string) => string[];
  setup?: (at: string) => void | Promise<void>;
  code: number;
  line: (at: string) => string;
  check?: (at: string, r: ReturnType<typeof edgewise>) => void;
}

const recipeAt = (at: string, text = TEXT) => {
  writeFileSync(join(at, 'recipe.json'), text);
  return join(at, 'recipe.json');
};

/** A process id that no process has now: one that has just exited. */
function deadPid(): number {
  const pid = spawnSync('true').pid;
  if (!pid) throw new Error('test set-up: no process could be started');
  return pid;
}

/** An arsenic implant annealed: the stepper leaves round-off negatives below the profile (invented recipe). */
const ARSENIC = '{"title":"arsenic implant anneal (invented)","substrate":{"dopant":"B","concentrationCm3":1e15},' +
  '"crossSection":{"widthUm":6},"mask":{"windows":[[2,4]]},"steps":[' +
  '{"kind":"implant","dopant":"As","doseCm2":5e15,"projectedRangeUm":0.05,"straggleUm":0.02},{"kind":"anneal","temperatureC":1000,"minutes":30}]}';

/** The smallest value of the species layers of a field.npy (every layer after net doping). */
function smallestSpeciesValue(path: string): number {
  const bytes = readFileSync(path);
  const headerLength = bytes.readUInt16LE(8);
  const header = bytes.subarray(10, 10 + headerLength).toString('latin1');
  const [, nz, nx] = /'shape': \((\d+), (\d+), (\d+)\)/.exec(header)!.slice(1).map(Number);
  const values = new Float64Array(bytes.buffer.slice(bytes.byteOffset + 10 + headerLength, bytes.byteOffset + bytes.length));
  let smallest = Infinity;
  for (let k = nz * nx; k < values.length; k++) smallest = Math.min(smallest, values[k]);
  return smallest;
}

let busyPort = 0;
const ESCAPED_TITLE = 'hostile \\u001b[2J\\u001b]0;owned\\u0007 \\u009b31m title';

const COMMAND_CASES: CommandCase[] = [
  { name: 'a title with terminal escapes (ESC, BEL, CSI): shown escaped, not obeyed',
    setup: (at) => { recipeAt(at, withText('"title":"hostile-input base (invented)"', `"title":${JSON.stringify('hostile \x1b[2J\x1b]0;owned\x07 \x9b31m title')}`)); },
    args: (at) => ['run', join(at, 'recipe.json'), '--out', join(at, 'out'), '--error-solves', '0', '--quiet'],
    code: 0, line: () => ESCAPED_TITLE,
    check: (_, r) => expect(/[\x00-\x09\x0b-\x1f\x7f-\x9f]/.test(r.stdout + r.stderr), JSON.stringify(r.stdout)).toBe(false) },
  { name: 'run --out "" (the current folder by accident)', setup: (at) => { recipeAt(at); },
    args: (at) => ['run', join(at, 'recipe.json'), '--out', '', '--quiet'], code: 2,
    line: () => '--out: is empty; give a folder name (default out/recipe)' },
  { name: 'sweep --out ""', setup: (at) => { recipeAt(at); },
    args: (at) => ['sweep', join(at, 'recipe.json'), '--widths', '4,5', '--out', '', '--quiet'], code: 2,
    line: () => '--out: is empty; give a folder name (default out/recipe-sweep)' },
  { name: 'spacing --out ""', setup: (at) => { recipeAt(at); },
    args: (at) => ['spacing', join(at, 'recipe.json'), '--gap', '1', '--out', ' ', '--quiet'], code: 2,
    line: () => '--out: is empty; give a folder name (default out/recipe-spacing)' },
  { name: 'a FIFO as the recipe (it would never end)',
    setup: (at) => { expect(spawnSync('mkfifo', [join(at, 'fifo.json')]).status).toBe(0); },
    args: (at) => ['run', join(at, 'fifo.json'), '--out', join(at, 'out'), '--quiet'], code: 2,
    line: (at) => `${join(at, 'fifo.json')}: is a pipe (FIFO), not a regular file; save the recipe to a file and give that` },
  { name: 'a temporary left by a writer killed on this machine is removed; one of another machine is not',
    setup: (at) => {
      recipeAt(at);
      mkdirSync(join(at, 'out'));
      const ours = temporaryName(join(at, 'out', 'field.npy'));
      writeFileSync(ours.replace(`.${process.pid}.`, `.${deadPid()}.`), 'half a field');
      writeFileSync(join(at, 'out', 'field.npy.other-node.12345.abc123.tmp'), 'a field being written elsewhere');
    },
    args: (at) => ['run', join(at, 'recipe.json'), '--out', join(at, 'out'), '--error-solves', '0', '--quiet'], code: 0,
    line: (at) => `wrote ${join(at, 'out')}/: field.npy, x.npy, z.npy, contour.csv, contour.svg, report.json, recipe.json`,
    check: (at) => expect(readdirSync(join(at, 'out')).filter((n) => n.endsWith('.tmp'))).toEqual(['field.npy.other-node.12345.abc123.tmp']) },
  { name: 'view --port already in use',
    setup: async () => {
      const server = createServer();
      await new Promise<void>((done) => server.listen(0, '127.0.0.1', done));
      busyPort = (server.address() as AddressInfo).port;
      server.unref();
    },
    args: (at) => ['view', at, '--port', String(busyPort)], code: 2,
    line: () => `--port ${busyPort}: is in use by another program; choose another port, or leave out --port for any free one` },
  { name: 'run --out under a regular file: refused before the solve, naming the folder',
    setup: (at) => { recipeAt(at); writeFileSync(join(at, 'plain'), 'not a folder'); },
    args: (at) => ['run', join(at, 'recipe.json'), '--out', join(at, 'plain', 'out'), '--quiet'], code: 2,
    line: (at) => `${join(at, 'plain', 'out')}: cannot be written: ${join(at, 'plain')} is a file, not a folder; move that file away, or choose another folder with --out` },
  { name: 'a species of the recipe\'s own named like a built-in one (B)',
    setup: (at) => { recipeAt(at, withKey('"dopants":{"B":{"type":"acceptor","D0Cm2PerS":0.76,"EaEv":3.46}}')); },
    args: (at) => ['run', join(at, 'recipe.json'), '--out', join(at, 'out'), '--quiet'], code: 2,
    line: () => 'bad recipe: dopants.B: "B" is a built-in dopant (B, P, As, Sb); a species of the recipe\'s own needs another name' },
  { name: 'a sweep section sweep would refuse ("widthsUm": "1:0:8"): run refuses it too',
    setup: (at) => { recipeAt(at, withKey('"sweep":{"widthsUm":"1:0:8"}')); },
    args: (at) => ['run', join(at, 'recipe.json'), '--out', join(at, 'out'), '--quiet'], code: 2,
    line: () => 'sweep.widthsUm "1:0:8": the step must not be 0 (a range is start:step:stop, e.g. 0.5:0.5:8)',
    check: (at) => {
      const sweep = edgewise(['sweep', join(at, 'recipe.json'), '--out', join(at, 'out'), '--quiet']);
      expect(sweep.code).toBe(2);
      expect(sweep.stderr).toBe('edgewise: sweep.widthsUm "1:0:8": the step must not be 0 (a range is start:step:stop, e.g. 0.5:0.5:8)\n');
    } },
  { name: 'an arsenic implant annealed: no round-off negatives in field.npy',
    setup: (at) => { recipeAt(at, ARSENIC); },
    args: (at) => ['run', join(at, 'recipe.json'), '--out', join(at, 'out'), '--error-solves', '0', '--quiet'], code: 0,
    line: (at) => `wrote ${join(at, 'out')}/: field.npy, x.npy, z.npy, contour.csv, contour.svg, report.json, recipe.json`,
    // A concentration is never negative (common practice, no source); the file contract says 0 there.
    check: (at) => expect(smallestSpeciesValue(join(at, 'out', 'field.npy'))).toBe(0) },
  { name: 'a misspelt step kind ("type"): both the unknown key and the one meant',
    setup: (at) => { recipeAt(at, withText('{"kind":"drive-in"', '{"type":"drive-in"')); },
    args: (at) => ['run', join(at, 'recipe.json'), '--out', join(at, 'out'), '--quiet'], code: 2,
    line: () => 'bad recipe: steps[1]: "type" is not a key here; did you mean "kind"? (one of predeposition, film, implant, drive-in, anneal)' },
  { name: 'a misspelt key beside the one missing (concentration for concentrationCm3)',
    setup: (at) => { recipeAt(at, withText('"concentrationCm3":1e15', '"concentration":1e15')); },
    args: (at) => ['run', join(at, 'recipe.json'), '--out', join(at, 'out'), '--quiet'], code: 2,
    line: () => 'bad recipe: substrate: "concentration" is not a key here; did you mean "concentrationCm3"?' },
];

describe('hostile input to every command: its exit code and its one line', () => {
  COMMAND_CASES.forEach((c) => {
    it(c.name, async () => {
      const at = tempDir('edgewise-hostile-command-');
      await c.setup?.(at);
      const r = edgewise(c.args(at), { cwd: at });
      expect(r.code, r.stderr).toBe(c.code);
      if (c.code === 0) {
        expect(r.stdout.split('\n'), r.stdout).toContain(c.line(at));
      } else {
        expect(r.stderr).toBe(`edgewise: ${c.line(at)}\n`);
        expect(r.stdout).toBe('');
      }
      c.check?.(at, r);
    });
  });
});

describe('the viewer server answers only under its own name (no DNS rebinding)', () => {
  it('a Host header other than 127.0.0.1 or localhost with the served port is refused (403); its own names are served', async () => {
    const data = tempDir('edgewise-host-');
    writeFileSync(join(data, 'report.json'), '{}');
    const { server, url } = await startViewServer({ dataDir: data, viewerDir: data, port: 0 });
    const port = Number(new URL(url).port);
    const status = (host: string) => new Promise<number>((done, fail) => {
      httpGet({ host: '127.0.0.1', port, path: '/data/report.json', headers: { host } }, (res) => { res.resume(); done(res.statusCode ?? 0); }).on('error', fail);
    });
    try {
      expect(await status('attacker.example')).toBe(403);
      expect(await status(`attacker.example:${port}`)).toBe(403);
      expect(await status(`127.0.0.1:${port + 1}`)).toBe(403);
      expect(await status(`127.0.0.1:${port}`)).toBe(200);
      expect(await status(`localhost:${port}`)).toBe(200);
    } finally {
      server.close();
    }
  });
});
