import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative, resolve, sep } from 'node:path';
import { parseArgs } from 'node:util';
import { fileSystemError, InputError, UsageError } from '../errors.ts';
import { inside, writeAtomic } from '../files.ts';
import { HELP_OPTION, type CommandSpec } from '../help.ts';
import { encodeCsv, parseCsv } from '../sweep/csv.ts';
import { SWEEP_SCHEMA_ID, type SweepDocument, type SweepRunEntry } from '../sweep/record.ts';
import { runFolderProblem } from '../sweep/resume.ts';
import { SHARD_FILE } from '../sweep/shard.ts';
import { EXIT_RUNS_FAILED } from './sweep.ts';

export const MERGE_USAGE = 'edgewise merge DIR… [--out DIR]';

export const MERGE_SPEC = {
  usage: MERGE_USAGE,
  summary: 'Joins the shards of a sweep (sweep-shard-K-of-N.json and .csv, written by `edgewise sweep --shard K/N`) into one sweep.csv and sweep.json, after checking that all N shards of one sweep are there and that every run listed as ok is whole. Exit code 3 when some runs are not ok.',
  arguments: [['DIR…', 'the folders the shards were written to']],
  options: {
    out: { type: 'string', value: 'DIR', help: 'the folder to write sweep.csv and sweep.json into', defaultText: 'the first DIR' },
    ...HELP_OPTION,
  },
} as const satisfies CommandSpec;

interface ShardFiles {
  folder: string;
  name: string;
  doc: SweepDocument;
  header: string[];
  rows: string[][];
}

/** A shard file's text; a file-system error becomes one line naming the file and the cause. */
function readText(path: string): string {
  try {
    return readFileSync(path, 'utf8');
  } catch (e) {
    throw fileSystemError(e, 'read', path) ?? e;
  }
}

function readShard(folder: string, name: string): ShardFiles {
  const jsonPath = join(folder, name);
  const csvPath = jsonPath.replace(/\.json$/, '.csv');
  let doc: SweepDocument;
  const jsonText = readText(jsonPath);
  try {
    doc = JSON.parse(jsonText) as SweepDocument;
  } catch (e) {
    throw new InputError(`${jsonPath}: is not readable JSON: ${(e as Error).message.split('\n')[0]}`);
  }
  if (doc.schema !== SWEEP_SCHEMA_ID || !doc.shard || !Array.isArray(doc.runs) || !Array.isArray(doc.parameters)) {
    throw new InputError(`${jsonPath}: is not a sweep shard index (schema "${SWEEP_SCHEMA_ID}" with a shard)`);
  }
  if (!existsSync(csvPath)) throw new InputError(`${csvPath}: is missing (every shard writes a .csv beside its .json)`);
  let table: string[][];
  const csvText = readText(csvPath);
  try {
    table = parseCsv(csvText);
  } catch (e) {
    throw new InputError(`${csvPath}: is not readable CSV: ${(e as Error).message}`);
  }
  const [header, ...rows] = table;
  if (!header) throw new InputError(`${csvPath}: is empty`);
  const ids = rows.map((r) => Number(r[0]));
  const listed = doc.runs.map((r) => r.id);
  if (rows.some((r) => r.length !== header.length) || ids.join() !== listed.join()) {
    throw new InputError(`${csvPath}: does not match ${name} (the rows must be the runs listed there, in order)`);
  }
  return { folder, name, doc, header, rows };
}

/**
 * Joins the slices of a sharded sweep (`sweep-shard-K-of-N.json` and `.csv` in the given folders)
 * into one sweep.csv and sweep.json, whose run folders are referred to where they lie.
 */
export function mergeCommand(args: string[]): number {
  const { values, positionals } = parseArgs({ args, allowPositionals: true, strict: true, options: MERGE_SPEC.options });
  if (positionals.length === 0) throw new UsageError(`merge takes the folders holding the shards (usage: ${MERGE_USAGE})`);
  const shards: ShardFiles[] = [];
  const seenFolders = new Set<string>();
  for (const folder of positionals) {
    if (!existsSync(folder) || !statSync(folder).isDirectory()) throw new UsageError(`merge: ${folder}: is not a folder (give the folders the shards wrote to)`);
    const key = resolve(folder);
    if (seenFolders.has(key)) continue;
    seenFolders.add(key);
    const names = readdirSync(folder).filter((n) => SHARD_FILE.test(n)).sort();
    if (names.length === 0) throw new UsageError(`merge: ${folder}: holds no shard files (sweep-shard-K-of-N.json, written by edgewise sweep --shard K/N)`);
    for (const name of names) shards.push(readShard(folder, name));
  }

  const first = shards[0];
  const where = (s: ShardFiles) => join(s.folder, s.name);
  for (const s of shards) {
    if (s.doc.sweepSha256 !== first.doc.sweepSha256) {
      throw new UsageError(`merge: ${where(s)} is from a different sweep than ${where(first)} (other recipe, values or parameters)`);
    }
    if (s.doc.errorSolves !== first.doc.errorSolves) {
      throw new UsageError(`merge: ${where(s)} has error bars from ${s.doc.errorSolves} coarser solves, ${where(first)} from ${first.doc.errorSolves}; run every shard with the same --error-solves`);
    }
    if (s.header.join() !== first.header.join()) throw new UsageError(`merge: ${where(s)} has other columns than ${where(first)}`);
  }
  const counts = [...new Set(shards.map((s) => s.doc.shard!.count))].sort((a, b) => a - b);
  if (counts.length > 1) {
    const split = (n: number) => shards.map((s) => s.doc.shard!).filter((sh) => sh.count === n).sort((a, b) => a.index - b.index).map((sh) => `${sh.index}/${n}`).join(', ');
    throw new UsageError(`merge: the shards are of ${counts.length} different splits (${counts.map(split).join('; ')}): give the shards of one split, all --shard K/N with the same N`);
  }
  const count = first.doc.shard!.count;
  const byIndex = new Map<number, ShardFiles>();
  for (const s of shards) {
    const index = s.doc.shard!.index;
    const twin = byIndex.get(index);
    if (twin) throw new UsageError(`merge: shard ${index}/${count} appears twice (${where(twin)} and ${where(s)}); give each shard once`);
    byIndex.set(index, s);
  }
  const missing = Array.from({ length: count }, (_, k) => k + 1).filter((k) => !byIndex.has(k));
  if (missing.length > 0) {
    throw new UsageError(`merge: missing shard${missing.length === 1 ? '' : 's'} ${missing.map((k) => `${k}/${count}`).join(', ')} (found ${[...byIndex.keys()].sort((a, b) => a - b).map((k) => `${k}/${count}`).join(', ')})`);
  }

  const out = values.out ?? first.folder;
  if (existsSync(out) && !statSync(out).isDirectory()) throw new UsageError(`--out ${out}: is a file, not a folder`);
  const runs: { entry: SweepRunEntry; row: string[] }[] = [];
  for (const s of shards) {
    s.doc.runs.forEach((entry, k) => {
      const dir = relative(resolve(out), resolve(s.folder, entry.dir)).split(sep).join('/');
      runs.push({ entry: { ...entry, dir }, row: s.rows[k] });
    });
  }
  runs.sort((a, b) => a.entry.id - b.entry.id);
  const total = first.doc.total;
  if (runs.length !== total || runs.some((r, k) => r.entry.id !== k + 1)) {
    throw new UsageError(`merge: the shards hold ${runs.length} runs, not the ${total} runs 1 to ${total} of the sweep`);
  }

  // Every run listed as ok must still be there, whole: its folder, recipe, report and fields.
  const broken: string[] = [];
  for (const s of shards) {
    for (const entry of s.doc.runs) {
      if (entry.status !== 'ok') continue;
      const folder = inside(s.folder, entry.dir);
      const { problem } = runFolderProblem(folder, entry.recipeSha256, s.doc.errorSolves);
      if (problem) broken.push(`run ${entry.id} (${join(s.folder, entry.dir)}): ${problem}`);
    }
  }
  if (broken.length > 0) {
    throw new InputError(`merge: ${broken.length} run${broken.length === 1 ? ' listed as ok is' : 's listed as ok are'} not whole: ${broken.slice(0, 3).join('; ')}${broken.length > 3 ? '; …' : ''} ` +
      '(run the shard again with --resume to redo them)');
  }

  const doc: SweepDocument = { ...first.doc, shard: null, runs: runs.map((r) => r.entry) };
  writeAtomic(inside(out, 'sweep.csv'), encodeCsv([first.header, ...runs.map((r) => r.row)]));
  writeAtomic(inside(out, 'sweep.json'), `${JSON.stringify(doc, null, 2)}\n`);
  const notOk = runs.filter((r) => r.entry.status !== 'ok');
  process.stdout.write(`merged ${count} shard${count === 1 ? '' : 's'}: ${total} runs, ${total - notOk.length} ok, ${notOk.length} not ok; wrote ${join(out, 'sweep.csv')}, ${join(out, 'sweep.json')}\n`);
  if (notOk.length > 0) {
    process.stderr.write(`merge: ${notOk.length} runs did not finish ok (${notOk.slice(0, 10).map((r) => `${r.entry.id} ${r.entry.status}`).join(', ')}${notOk.length > 10 ? ', …' : ''})\n`);
    return EXIT_RUNS_FAILED;
  }
  return 0;
}
