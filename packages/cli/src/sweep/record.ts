import { SWEEP_SCHEMA_ID } from '@edgewise/solver2d';
import { inside, writeAtomic } from '../files.ts';
import { csvHeader, csvRow, encodeCsv, type RunRow, type RunStatus } from './csv.ts';
import type { Shard } from './shard.ts';

/**
 * sweep.json ("edgewise.sweep/1"): the index of a sweep folder. `parameters` names the swept
 * values; `runs` lists each run's id, folder (relative to this file), values, status and error,
 * with the hash of the run's recipe that `--resume` checks a finished folder against.
 */
export { SWEEP_SCHEMA_ID };

export interface SweepRunEntry {
  id: number;
  dir: string;
  values: Record<string, number>;
  status: RunStatus;
  error: string | null;
  recipeSha256: string;
}

export interface SweepDocument {
  schema: typeof SWEEP_SCHEMA_ID;
  title: string | null;
  parameters: string[];
  /** windows per run (rectangles in 3D); sweep.csv has a group of columns for each */
  windows: number;
  /** true for a 3D sweep (mask.rectangles): the columns are each rectangle's depth and reaches */
  rectangles?: boolean;
  /** with `electrical`: the labels of sweep.csv's per-bias columns ("5V", or "bias1" where the runs' biases differ) */
  electricalBiases?: string[];
  /** runs in the whole sweep (all shards) */
  total: number;
  /** which slice of the sweep this file covers; null for a whole sweep */
  shard: Shard | null;
  /** identity of the whole sweep, the same in every shard: merge refuses to mix sweeps */
  sweepSha256: string;
  /** coarser solves behind each run's error bars */
  errorSolves: number;
  runs: SweepRunEntry[];
}

/** Writes `<stem>.csv`, then `<stem>.json`; both atomic, so a reader sees an old or a new file, never half of one. */
export function writeSweepFiles(folder: string, stem: string, doc: SweepDocument, rows: readonly RunRow[]): string[] {
  const table = [
    csvHeader(doc.parameters, doc.windows, doc.rectangles, doc.electricalBiases),
    ...rows.map((r) => csvRow(r, doc.parameters, doc.windows, doc.rectangles, doc.electricalBiases)),
  ];
  writeAtomic(inside(folder, `${stem}.csv`), encodeCsv(table));
  writeAtomic(inside(folder, `${stem}.json`), `${JSON.stringify(doc, null, 2)}\n`);
  return [`${stem}.csv`, `${stem}.json`];
}
