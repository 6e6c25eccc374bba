import { closeSync, existsSync, fstatSync, openSync, readFileSync, readSync, rmSync } from 'node:fs';
import { basename, join } from 'node:path';
import type { Report } from '@edgewise/solver2d';
import { reportSchema } from '@edgewise/solver2d/report-schema';
import { ELECTRICAL_FILES } from '../output.ts';
import { reportResults, type WindowResult } from './csv.ts';
import { recipeSha256 } from './hash.ts';
import { RECIPE_FILE } from './task.ts';
import { temporariesIn } from '../files.ts';

/** Files every finished run folder holds besides recipe.json (output.ts writes them). */
const NPY_FILES = ['field.npy', 'x.npy', 'z.npy'] as const;

/** Bytes of a .npy file as its header gives them (NEP 1, version 1.0 or 2.0, '<f8'), or why the header is not whole. */
function npyProblem(path: string, expectedShape: readonly number[]): string | null {
  const name = basename(path);
  let fd: number;
  try {
    fd = openSync(path, 'r');
  } catch {
    return `${name} is missing`;
  }
  try {
    const size = fstatSync(fd).size;
    const head = Buffer.alloc(12);
    const got = readSync(fd, head, 0, 12, 0);
    const magic = got >= 10 && head[0] === 0x93 && head.toString('latin1', 1, 6) === 'NUMPY';
    if (!magic) return `${name} is not a whole .npy file (${size} bytes, no NumPy header)`;
    const major = head[6];
    const headerLength = major === 1 ? head.readUInt16LE(8) : head.readUInt32LE(8);
    const preamble = major === 1 ? 10 : 12;
    const header = Buffer.alloc(headerLength);
    readSync(fd, header, 0, headerLength, preamble);
    const text = header.toString('latin1');
    const shapeText = /'shape':\s*\(([^)]*)\)/.exec(text)?.[1];
    if (!/'descr':\s*'<f8'/.test(text) || shapeText === undefined) return `${name} is not a whole .npy file (its header is cut short)`;
    const shape = shapeText.split(',').map((t) => t.trim()).filter((t) => t !== '').map(Number);
    if (shape.join() !== expectedShape.join()) return `${name} holds an array of shape (${shape.join(', ')}), not (${expectedShape.join(', ')}) as report.json says`;
    const expected = preamble + headerLength + 8 * shape.reduce((a, b) => a * b, 1);
    if (size !== expected) return `${name} holds ${size} bytes, not the ${expected} its header and report.json give`;
    return null;
  } finally {
    closeSync(fd);
  }
}

/**
 * Why `folder` does not hold a finished run of the recipe with this hash, or null when it
 * does: its recipe.json (written last) hashes the same, its report.json is a whole report
 * (the report schema) with error bars from as many coarser solves as asked for (null: any),
 * and every other file it writes is whole: each .npy holds the bytes its header and the
 * report's shape give, contour.csv and contour.svg end as written. A file cut short by a
 * crash, a full disk or a copy that stopped is found here.
 */
export function runFolderProblem(folder: string, expectedSha256: string, errorSolves: number | null): { problem: string; windows: null } | { problem: null; windows: WindowResult[] } {
  const fail = (problem: string) => ({ problem, windows: null });
  if (!existsSync(folder)) return fail('the folder is missing');
  const read = (name: string) => {
    try {
      return readFileSync(join(folder, name), 'utf8');
    } catch {
      return null;
    }
  };
  const recipeText = read(RECIPE_FILE);
  if (recipeText === null) return fail(`${RECIPE_FILE} is missing (the run did not finish)`);
  try {
    if (recipeSha256(JSON.parse(recipeText)) !== expectedSha256) return fail(`${RECIPE_FILE} is the recipe of another run`);
  } catch {
    return fail(`${RECIPE_FILE} is not readable JSON`);
  }
  const reportText = read('report.json');
  if (reportText === null) return fail('report.json is missing');
  let report: Report;
  try {
    const parsed = reportSchema.safeParse(JSON.parse(reportText));
    if (!parsed.success) return fail(`report.json is not a whole report (${parsed.error.issues[0]?.path.join('.') || 'its top level'} does not fit the report schema)`);
    report = parsed.data as Report;
  } catch {
    return fail('report.json is not readable JSON');
  }
  if (errorSolves !== null && (report.errorEstimate?.meshes?.length ?? 1) !== errorSolves + 1) {
    return fail(`report.json has error bars from ${(report.errorEstimate?.meshes?.length ?? 1) - 1} coarser solves, not ${errorSolves}`);
  }
  if (report.rectangles) {
    // 3D: field.npy [layers, nz, ny, nx] over the full plan view, with y.npy, and plan.svg.
    const [, nz, ny, nx] = report.field.shape as number[];
    const shapes3d: [string, number[]][] = [['field.npy', report.field.shape], ['x.npy', [nx]], ['y.npy', [ny]], ['z.npy', [nz]]];
    for (const [name, shape] of shapes3d) {
      const problem = npyProblem(join(folder, name), shape);
      if (problem) return fail(problem);
    }
    const plan = read('plan.svg');
    if (plan === null || !plan.endsWith('</svg>\n')) return fail('plan.svg is missing or cut short');
    return { problem: null, windows: reportResults(report) };
  }
  const shapes: Record<(typeof NPY_FILES)[number], number[]> = {
    'field.npy': report.field.shape, 'x.npy': [report.mesh.columns], 'z.npy': [report.mesh.rows],
  };
  for (const name of NPY_FILES) {
    const problem = npyProblem(join(folder, name), shapes[name]);
    if (problem) return fail(problem);
  }
  const e = report.electrical;
  if (e) {
    const cross = [e.windows.length, e.biasV.length, e.mesh.rows, e.mesh.columns];
    const electricalShapes: [string, number[]][] = [
      [ELECTRICAL_FILES.potential, cross], [ELECTRICAL_FILES.field, cross], [ELECTRICAL_FILES.depletion, cross],
      [ELECTRICAL_FILES.x, [e.mesh.columns]], [ELECTRICAL_FILES.z, [e.mesh.rows]],
    ];
    for (const [name, shape] of electricalShapes) {
      const problem = npyProblem(join(folder, name), shape);
      if (problem) return fail(problem);
    }
  }
  const csv = read('contour.csv');
  if (csv === null || !csv.startsWith('junction,point,xUm,zUm\n') || !csv.endsWith('\n')) return fail('contour.csv is missing or cut short');
  const svg = read('contour.svg');
  if (svg === null || !svg.endsWith('</svg>\n')) return fail('contour.svg is missing or cut short');
  return { problem: null, windows: reportResults(report) };
}

/**
 * The report's windows if `folder` holds a finished run of the recipe with this hash, every
 * file whole (runFolderProblem), with error bars from as many coarser solves as asked for;
 * otherwise null.
 */
export function finishedRun(folder: string, expectedSha256: string, errorSolves: number): WindowResult[] | null {
  return runFolderProblem(folder, expectedSha256, errorSolves).windows;
}

/**
 * Removes temporary files left by a process that was killed while writing: those in `folder`
 * whose name starts with one of `prefixes` (or every one, for null). Only folders this process
 * owns are passed here, so no live writer loses its file.
 */
export function removeStaleTemps(folder: string, prefixes: readonly string[] | null): void {
  for (const { name } of temporariesIn(folder)) {
    if (prefixes && !prefixes.some((p) => name.startsWith(`${p}.`))) continue;
    rmSync(join(folder, name), { force: true });
  }
}
