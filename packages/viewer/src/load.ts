import { REPORT_SCHEMA_ID, SWEEP_SCHEMA_ID, type Report } from '@edgewise/solver2d';
import type { SectionInfo } from './cuts3d.ts';
import { loadElectrical, type ElectricalData } from './electrical-data.ts';
import { parseNpy } from './npy.ts';

/**
 * Reading run and sweep folders (contracts in DEVELOPERS.md) from wherever they are: the
 * `edgewise view` server, or files the user picked or dropped. Every failure becomes a
 * Problem naming the file and saying why, which the page shows; one broken run does not
 * stop the others from showing.
 */

export interface Problem {
  /** path of the file inside the opened folder */
  file: string;
  reason: string;
}

export class FileProblem extends Error {
  constructor(readonly file: string, readonly reason: string) {
    super(`${file}: ${reason}`);
    this.name = 'FileProblem';
  }
}

/** Where files come from. `read` throws FileProblem; `list` gives every file path it knows, if it can. */
export interface FileSource {
  label: string;
  read(path: string): Promise<ArrayBuffer>;
  /** several files in one go, where that is cheaper than one read each */
  readMany?(paths: string[]): Promise<Map<string, ArrayBuffer | FileProblem>>;
  has?(path: string): boolean;
  list(): Promise<string[] | null>;
}

export interface RunData {
  id: string;
  /** folder inside the opened folder, '' for a lone run */
  dir: string;
  values: Record<string, number | string>;
  report: Report;
  /** x cell centres and z nodes, µm */
  x: Float64Array;
  z: Float64Array;
  /** [layers, nz, nx], cm^-3; layer 0 net doping; a 3D run's is [layers, nz, ny, nx] */
  field: Float64Array;
  layers: string[];
  /** a 3D run (`mask.rectangles`): y cell centres, µm */
  y?: Float64Array;
  /** a section of a 3D run drawn as a tile (sections3d.ts): what it shows */
  section?: SectionInfo;
  /** the electrical rules' cross-sections, when the run has them (electrical-data.ts) */
  electrical?: ElectricalData;
}

export interface DataSet {
  label: string;
  kind: 'sweep' | 'run' | 'folders' | 'live';
  parameters: string[];
  runs: RunData[];
  problems: Problem[];
  /** a recipe found beside the results (recipe.json), for the live mode */
  recipe: unknown;
}


function join(dir: string, name: string): string {
  return dir ? `${dir.replace(/\/+$/, '')}/${name}` : name;
}

function decodeJson(file: string, buffer: ArrayBuffer): unknown {
  const text = new TextDecoder().decode(buffer);
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new FileProblem(file, `not valid JSON (${(e as Error).message})`);
  }
}

const isObject = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);
const isNumber = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);

/** The first thing wrong with a report object, naming its key; null if it is usable. */
export function reportProblem(r: unknown): string | null {
  if (!isObject(r)) return 'is not a JSON object';
  if (r.schema !== REPORT_SCHEMA_ID) return `"schema" is ${JSON.stringify(r.schema)}, expected "${REPORT_SCHEMA_ID}"`;
  const cs = r.crossSection;
  if (!isObject(cs) || !isNumber(cs.widthUm) || !isNumber(cs.depthUm) || cs.widthUm <= 0 || cs.depthUm <= 0) return '"crossSection" needs positive numbers widthUm and depthUm';
  if (!Array.isArray(r.windows)) return '"windows" must be a list';
  for (const [k, w] of r.windows.entries()) {
    if (!isObject(w) || !isNumber(w.x0Um) || !isNumber(w.x1Um)) return `"windows[${k}]" needs numbers x0Um and x1Um`;
    for (const key of ['junctionDepthUm', 'lateralLeftUm', 'lateralRightUm'] as const) {
      if (w[key] !== null && w[key] !== undefined && !isNumber(w[key])) return `"windows[${k}].${key}" must be a number or null`;
    }
  }
  if (!Array.isArray(r.junctions)) return '"junctions" must be a list';
  for (const [k, j] of r.junctions.entries()) {
    if (!isObject(j) || !Array.isArray(j.polylinesUm)) return `"junctions[${k}].polylinesUm" must be a list of polylines`;
    for (const line of j.polylinesUm) {
      if (!Array.isArray(line) || line.some((p: unknown) => !Array.isArray(p) || p.length !== 2 || !isNumber(p[0]) || !isNumber(p[1]))) {
        return `"junctions[${k}].polylinesUm" must hold polylines of [x, z] number pairs`;
      }
    }
  }
  const f = r.field;
  if (!isObject(f) || !Array.isArray(f.layers) || f.layers.length < 1 || f.layers.some((l) => typeof l !== 'string')) return '"field.layers" must be a list of layer names';
  // A 3D run (rectangles in its report) has the y axis too.
  const volume = Array.isArray(r.rectangles);
  if (volume && (!isNumber(cs.lengthUm) || cs.lengthUm <= 0)) return '"crossSection.lengthUm" must be a positive number in a 3D report (with "rectangles")';
  const dims = volume ? 'four positive whole numbers [layers, nz, ny, nx]' : 'three positive whole numbers [layers, nz, nx]';
  if (!Array.isArray(f.shape) || f.shape.length !== (volume ? 4 : 3) || f.shape.some((n) => !Number.isInteger(n) || n < 1)) return `"field.shape" must be ${dims}`;
  if (f.shape[0] !== f.layers.length) return `"field.shape" has ${f.shape[0]} layers but "field.layers" names ${f.layers.length}`;
  if (!isObject(r.substrate) || !isNumber(r.substrate.concentrationCm3)) return '"substrate.concentrationCm3" must be a number';
  return null;
}

async function readNpy(source: FileSource, file: string) {
  const buffer = await source.read(file);
  try {
    return parseNpy(buffer);
  } catch (e) {
    throw new FileProblem(file, (e as Error).message);
  }
}

/** One run folder; throws FileProblem for the first file that is missing or wrong. */
export async function loadRun(source: FileSource, dir: string, id: string, values: Record<string, number | string>): Promise<RunData> {
  const reportFile = join(dir, 'report.json');
  const fieldFile = join(dir, 'field.npy');
  const xFile = join(dir, 'x.npy');
  const zFile = join(dir, 'z.npy');
  // All four requests at once; the report is still checked first, so its problem is the one named.
  const arrays = Promise.all([readNpy(source, fieldFile), readNpy(source, xFile), readNpy(source, zFile)]);
  arrays.catch(() => undefined);
  const report = decodeJson(reportFile, await source.read(reportFile));
  const problem = reportProblem(report);
  if (problem) throw new FileProblem(reportFile, problem);
  const r = report as Report;
  const shape = r.field.shape;
  const [nz, nx] = [shape[1], shape[shape.length - 1]];
  const yFile = join(dir, 'y.npy');
  const yArray = shape.length === 4 ? readNpy(source, yFile) : null;
  yArray?.catch(() => undefined);
  const [field, x, z] = await arrays;
  if (field.shape.join() !== shape.join()) {
    throw new FileProblem(fieldFile, `has shape [${field.shape.join(', ')}], report.json says [${shape.join(', ')}]`);
  }
  if (x.shape.length !== 1 || x.shape[0] !== nx) throw new FileProblem(xFile, `holds ${x.shape.join(' × ')} values, the field has ${nx} columns`);
  if (z.shape.length !== 1 || z.shape[0] !== nz) throw new FileProblem(zFile, `holds ${z.shape.join(' × ')} values, the field has ${nz} rows`);
  const y = yArray ? await yArray : null;
  if (y && (y.shape.length !== 1 || y.shape[0] !== shape[2])) throw new FileProblem(yFile, `holds ${y.shape.join(' × ')} values, the field has ${shape[2]} along y`);
  for (const [file, a] of [[xFile, x.data], [zFile, z.data], [yFile, y?.data ?? new Float64Array(0)]] as const) {
    for (let k = 1; k < a.length; k++) if (!(a[k] > a[k - 1])) throw new FileProblem(file, `coordinates must increase (entry ${k} is ${a[k]} after ${a[k - 1]})`);
  }
  for (let k = 0; k < field.data.length; k++) {
    if (!Number.isFinite(field.data[k])) throw new FileProblem(fieldFile, `value ${k} is ${field.data[k]}, not a finite number`);
  }
  if (y) return { id, dir, values, report: r, x: x.data, y: y.data, z: z.data, field: field.data, layers: r.field.layers };
  const electrical = await loadElectrical(r, (name) => source.read(join(dir, name)), (name, reason) => new FileProblem(join(dir, name), reason));
  return { id, dir, values, report: r, x: x.data, z: z.data, field: field.data, layers: r.field.layers, ...(electrical ? { electrical } : {}) };
}

interface SweepEntry {
  id: string;
  dir: string;
  values: Record<string, number | string>;
  status?: string;
  error?: string | null;
}

function sweepProblem(s: unknown): string | null {
  if (!isObject(s)) return 'is not a JSON object';
  if (s.schema !== undefined && s.schema !== SWEEP_SCHEMA_ID) return `"schema" is ${JSON.stringify(s.schema)}, expected "${SWEEP_SCHEMA_ID}"`;
  if (!Array.isArray(s.parameters) || s.parameters.some((p) => typeof p !== 'string')) return '"parameters" must be a list of names';
  if (!Array.isArray(s.runs)) return '"runs" must be a list';
  for (const [k, r] of s.runs.entries()) {
    if (!isObject(r) || typeof r.dir !== 'string' || (typeof r.id !== 'string' && typeof r.id !== 'number')) return `"runs[${k}]" needs an id and a dir`;
    if (r.values !== undefined && !isObject(r.values)) return `"runs[${k}].values" must be an object`;
  }
  return null;
}

function compareValues(a: number | string | undefined, b: number | string | undefined): number {
  if (typeof a === 'number' && typeof b === 'number') return a - b;
  return String(a ?? '').localeCompare(String(b ?? ''), undefined, { numeric: true });
}

export function windowWidthUm(report: Report): number | null {
  const w = report.windows[0];
  return w ? w.x1Um - w.x0Um : null;
}

/** Runs in the order of their swept values (first parameter slowest), then by window width. */
export function sortRuns(runs: RunData[], parameters: string[]): RunData[] {
  return [...runs].sort((a, b) => {
    for (const p of parameters) {
      const c = compareValues(a.values[p], b.values[p]);
      if (c !== 0) return c;
    }
    return compareValues(windowWidthUm(a.report) ?? 0, windowWidthUm(b.report) ?? 0) || a.dir.localeCompare(b.dir);
  });
}

async function tryRead(source: FileSource, path: string): Promise<ArrayBuffer | null> {
  if (source.has && !source.has(path)) return null;
  try {
    return await source.read(path);
  } catch (e) {
    if (e instanceof FileProblem && /not found/.test(e.reason)) return null;
    throw e;
  }
}

async function loadRecipe(source: FileSource, dirs: string[], problems: Problem[], listed: string[] | null): Promise<unknown> {
  for (const dir of ['', ...dirs]) {
    const file = join(dir, 'recipe.json');
    if (listed && !listed.includes(file)) continue;
    try {
      const buffer = await tryRead(source, file);
      if (buffer) return decodeJson(file, buffer);
    } catch (e) {
      if (e instanceof FileProblem) problems.push({ file: e.file, reason: e.reason });
      return null;
    }
  }
  return null;
}

/** Opens whatever the source holds: a sweep folder, one run folder, or a folder of run folders. */
export async function loadDataSet(source: FileSource): Promise<DataSet> {
  const problems: Problem[] = [];
  // A source that cannot say whether it holds a file may list them: one request that saves
  // asking for a sweep.json that a run folder does not have.
  const listed = source.has ? null : await source.list().catch(() => null);
  const absent = (path: string) => (source.has ? !source.has(path) : listed !== null && !listed.includes(path));
  const note = (e: unknown) => {
    if (e instanceof FileProblem) problems.push({ file: e.file, reason: e.reason });
    else problems.push({ file: source.label, reason: (e as Error).message ?? String(e) });
  };
  const gather = async (entries: SweepEntry[], kind: DataSet['kind'], parameters: string[]): Promise<DataSet> => {
    const runSource = prefetched(source, entries.filter((e) => !e.error).map((e) => e.dir));
    const results = await Promise.all(entries.map(async (entry) => {
      if (entry.error) {
        problems.push({ file: join(entry.dir, 'report.json'), reason: `run ${entry.id} failed in the sweep: ${entry.error}` });
        return null;
      }
      try {
        return await loadRun(runSource, entry.dir, entry.id, entry.values);
      } catch (e) {
        if (e instanceof FileProblem && /not found/.test(e.reason) && entry.status && !/^(done|ok|complete)/i.test(entry.status)) {
          problems.push({ file: e.file, reason: `${e.reason} (the sweep lists run ${entry.id} as ${entry.status})` });
        } else note(e);
        return null;
      }
    }));
    const runs = sortRuns(results.filter((r): r is RunData => r !== null), parameters);
    const recipe = await loadRecipe(source, entries.slice(0, 1).map((e) => e.dir), problems, listed);
    return { label: source.label, kind, parameters, runs, problems, recipe };
  };

  let sweepBuffer: ArrayBuffer | null = null;
  try {
    if (!absent('sweep.json')) sweepBuffer = await tryRead(source, 'sweep.json');
  } catch (e) {
    note(e);
  }
  if (sweepBuffer) {
    try {
      const sweep = decodeJson('sweep.json', sweepBuffer);
      const problem = sweepProblem(sweep);
      if (problem) throw new FileProblem('sweep.json', problem);
      const s = sweep as { parameters: string[]; runs: SweepEntry[] };
      const entries = s.runs.map((r) => ({ ...r, id: String(r.id), values: (r.values ?? {}) as Record<string, number | string> }));
      return await gather(entries, 'sweep', s.parameters);
    } catch (e) {
      note(e);
      return { label: source.label, kind: 'sweep', parameters: [], runs: [], problems, recipe: null };
    }
  }
  const hasReport = source.has ? source.has('report.json')
    : listed ? listed.includes('report.json')
    : await tryRead(source, 'report.json').catch(() => null) !== null;
  if (hasReport) {
    return gather([{ id: 'run', dir: '', values: {} }], 'run', []);
  }
  const dirs = (listed ?? await source.list().catch(() => null) ?? [])
    .filter((p) => /(^|\/)report\.json$/.test(p))
    .map((p) => p.replace(/\/?report\.json$/, ''))
    .filter((d) => d.length > 0);
  if (dirs.length > 0) return gather(dirs.map((d) => ({ id: d, dir: d, values: {} })), 'folders', []);
  problems.push({ file: 'sweep.json', reason: `not found, and there is no report.json in ${source.label} or in a folder below it: open a run or sweep folder` });
  return { label: source.label, kind: 'run', parameters: [], runs: [], problems, recipe: null };
}

/** Run folders read together in one batch request. */
const RUNS_PER_BATCH = 4;

/**
 * The source, with every run folder's four files asked for up front in batches (where the
 * source can batch), so a sweep of many runs costs a few requests instead of four per run.
 */
function prefetched(source: FileSource, dirs: string[]): FileSource {
  if (!source.readMany || dirs.length === 0) return source;
  const pending = new Map<string, Promise<ArrayBuffer>>();
  for (let k = 0; k < dirs.length; k += RUNS_PER_BATCH) {
    const paths = dirs.slice(k, k + RUNS_PER_BATCH).flatMap((d) => ['report.json', 'field.npy', 'x.npy', 'z.npy'].map((f) => join(d, f)));
    const batch = source.readMany(paths);
    for (const p of paths) {
      const one = batch.then((files) => {
        const got = files.get(p);
        if (got instanceof FileProblem) throw got;
        return got ?? source.read(p);
      }, () => source.read(p));
      one.catch(() => undefined);
      pending.set(p, one);
    }
  }
  return {
    label: source.label,
    read: (path) => pending.get(path) ?? source.read(path),
    has: source.has?.bind(source),
    list: () => source.list(),
  };
}

/** Files served over HTTP under `base` (the `edgewise view` server). */
export class HttpSource implements FileSource {
  constructor(readonly label: string, private readonly base: string, private readonly listUrl: string | null, private readonly batchUrl: string | null = null) {
    if (!batchUrl) this.readMany = undefined;
  }

  /** The server's batch of files (layout in the CLI's view-server.ts, sendBatch). */
  readMany? = async (paths: string[]): Promise<Map<string, ArrayBuffer | FileProblem>> => {
    const query = paths.map((p) => `p=${encodeURIComponent(p)}`).join('&');
    const response = await fetch(`${this.batchUrl}?${query}`, { cache: 'no-store' });
    if (!response.ok) throw new Error(`batch request answered ${response.status}`);
    const buffer = await response.arrayBuffer();
    const headLength = new DataView(buffer).getUint32(0, true);
    const index = JSON.parse(new TextDecoder().decode(new Uint8Array(buffer, 4, headLength))) as ({ path: string; size?: number; error?: string })[];
    const out = new Map<string, ArrayBuffer | FileProblem>();
    let offset = 4 + headLength;
    for (const entry of index) {
      if (entry.error !== undefined || entry.size === undefined) {
        out.set(entry.path, new FileProblem(entry.path, entry.error ?? 'not found'));
        continue;
      }
      out.set(entry.path, buffer.slice(offset, offset + entry.size));
      offset += entry.size + ((8 - (entry.size % 8)) % 8);
    }
    return out;
  };

  async read(path: string): Promise<ArrayBuffer> {
    let response: Response;
    try {
      response = await fetch(this.base + path.split('/').map(encodeURIComponent).join('/'), { cache: 'no-store' });
    } catch (e) {
      throw new FileProblem(path, `could not be fetched (${(e as Error).message})`);
    }
    if (response.status === 404) throw new FileProblem(path, 'not found');
    if (!response.ok) throw new FileProblem(path, `the server answered ${response.status} ${response.statusText}`);
    return response.arrayBuffer();
  }

  async list(): Promise<string[] | null> {
    if (!this.listUrl) return null;
    const response = await fetch(this.listUrl, { cache: 'no-store' });
    return response.ok ? ((await response.json()) as string[]) : null;
  }
}

/** Files the user picked or dropped, by their path inside the chosen folder. */
export class LocalFilesSource implements FileSource {
  readonly files = new Map<string, File>();

  constructor(readonly label: string, entries: Iterable<[string, File]>) {
    for (const [path, file] of entries) this.files.set(path, file);
  }

  has(path: string): boolean {
    return this.files.has(path);
  }

  async read(path: string): Promise<ArrayBuffer> {
    const file = this.files.get(path);
    if (!file) throw new FileProblem(path, 'not found');
    try {
      return await file.arrayBuffer();
    } catch (e) {
      throw new FileProblem(path, `could not be read (${(e as Error).message})`);
    }
  }

  async list(): Promise<string[]> {
    return [...this.files.keys()];
  }
}

/**
 * Paths relative to the chosen folder: a folder pick or drop gives "name/…" for every file,
 * and that shared first part is the folder itself.
 */
export function relativePaths(paths: string[]): { root: string; paths: string[] } {
  const firsts = new Set(paths.map((p) => (p.includes('/') ? p.slice(0, p.indexOf('/')) : '')));
  if (firsts.size === 1 && !firsts.has('')) {
    const root = [...firsts][0];
    return { root, paths: paths.map((p) => p.slice(root.length + 1)) };
  }
  return { root: '', paths };
}
