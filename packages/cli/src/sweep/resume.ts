import { readdirSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { REPORT_SCHEMA_ID, type WindowReport } from '@edgewise/solver2d';
import { recipeSha256 } from './hash.ts';
import { RECIPE_FILE } from './task.ts';

/**
 * The report's windows if `folder` holds a finished run of the recipe with this hash: its
 * recipe.json (written last) hashes the same, and its report.json is a report with error bars
 * from as many coarser solves as asked for. Otherwise null.
 */
export function finishedRun(folder: string, expectedSha256: string, errorSolves: number): WindowReport[] | null {
  try {
    const recipe: unknown = JSON.parse(readFileSync(join(folder, RECIPE_FILE), 'utf8'));
    if (recipeSha256(recipe) !== expectedSha256) return null;
    const report = JSON.parse(readFileSync(join(folder, 'report.json'), 'utf8')) as
      { schema?: unknown; windows?: unknown; errorEstimate?: { meshes?: unknown[] } };
    if (report.schema !== REPORT_SCHEMA_ID || !Array.isArray(report.windows)) return null;
    if ((report.errorEstimate?.meshes?.length ?? 1) !== errorSolves + 1) return null;
    return report.windows as WindowReport[];
  } catch {
    return null;
  }
}

/** The temporary names files.ts writes before renaming: `<name>.<pid>.<random>.tmp`. */
const TEMP_NAME = /\.\d+\.[0-9a-z]+\.tmp$/;

/**
 * Removes temporary files left by a process that was killed while writing: those in `folder`
 * whose name starts with one of `prefixes` (or every one, for null). Only folders this process
 * owns are passed here, so no live writer loses its file.
 */
export function removeStaleTemps(folder: string, prefixes: readonly string[] | null): void {
  let names: string[];
  try {
    names = readdirSync(folder);
  } catch {
    return;
  }
  for (const name of names) {
    if (!TEMP_NAME.test(name)) continue;
    if (prefixes && !prefixes.some((p) => name.startsWith(`${p}.`))) continue;
    rmSync(join(folder, name), { force: true });
  }
}
