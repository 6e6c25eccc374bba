import { lstatSync, readdirSync, rmdirSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { fileSystemError } from '../errors.ts';
import { ELECTRICAL_FILES } from '../output.ts';
import { TEMPORARY } from '../files.ts';
import { inShard, type Shard } from './shard.ts';
import { RECIPE_FILE } from './task.ts';

/** A run folder's name as a sweep makes it (matrix.ts runDir): `run-` and the id, zero-padded. */
const RUN_FOLDER = /^run-(\d+)$/;

/** Files a sweep writes into a run folder, 2D or 3D (output.ts and the marker); its temporary names are files.ts's TEMPORARY. */
const RUN_FILES = new Set(['field.npy', 'x.npy', 'y.npy', 'z.npy', 'contour.csv', 'contour.svg', 'plan.svg', 'report.json', RECIPE_FILE, ...Object.values(ELECTRICAL_FILES)]);

export interface StaleFolders {
  /** run folders of an earlier sweep, removed */
  removed: string[];
  /** run folders this sweep does not make that hold files of other names (or are links), left as they are */
  kept: string[];
}

/**
 * Run folders in `out` that this sweep does not make — left by an earlier, larger sweep (or one
 * of more runs, whose names were padded wider). Those that hold only files a sweep writes are
 * removed; any other is left and named. With a shard, only the folders whose id falls in its
 * slice are its own to remove, so that tasks sharing a folder never remove the same one.
 */
export function removeStaleRunFolders(out: string, ours: ReadonlySet<string>, shard: Shard | null): StaleFolders {
  const result: StaleFolders = { removed: [], kept: [] };
  let names: string[];
  try {
    names = readdirSync(out);
  } catch {
    return result;
  }
  for (const name of names.sort()) {
    const m = RUN_FOLDER.exec(name);
    if (!m || ours.has(name) || !inShard(Number(m[1]), shard)) continue;
    const folder = join(out, name);
    let entries: string[];
    try {
      const stat = lstatSync(folder);
      // A symbolic link is never followed to remove what it leads to: it is named and left.
      if (stat.isSymbolicLink()) {
        result.kept.push(name);
        continue;
      }
      if (!stat.isDirectory()) continue;
      entries = readdirSync(folder);
    } catch {
      continue;
    }
    if (!entries.every((e) => RUN_FILES.has(e) || TEMPORARY.test(e))) {
      result.kept.push(name);
      continue;
    }
    try {
      for (const e of entries) rmSync(join(folder, e), { force: true });
      rmdirSync(folder);
    } catch (e) {
      throw fileSystemError(e, 'write', folder) ?? e;
    }
    result.removed.push(name);
  }
  return result;
}

/** The first names of a list, for one line: `run-0007, run-0008, … (12 in all)`. */
export function someNames(names: readonly string[], most = 5): string {
  return names.length <= most ? names.join(', ') : `${names.slice(0, most).join(', ')}, … (${names.length} in all)`;
}
