import { parseRecipe, planRecipe, RecipeError, windowOrder, type PlanLimits, type Recipe } from '@edgewise/solver2d';
import { UsageError } from '../errors.ts';
import { biasLabels } from './csv.ts';
import { withLimitHint } from '../limits.ts';
import { checkNumericPath, formatPath, parsePath, setAt, type Segment } from './fields.ts';
import { recipeSha256, sha256 } from './hash.ts';
import { parseValues, tidy } from './values.ts';

/** The swept window width's name in sweep.csv and sweep.json. */
export const WIDTH_PARAMETER = 'windowWidthUm';
/** Most runs one sweep may hold (each run is validated, and listed in sweep.json, up front). */
export const MAX_RUNS = 100_000;

export interface Parameter {
  /** `windowWidthUm`, or a recipe path such as `steps[1].minutes` */
  name: string;
  /** where the values came from, for messages: `--widths`, `sweep.set["steps[1].minutes"]` */
  label: string;
  values: number[];
  /** null for the window width */
  path: Segment[] | null;
}

export interface SweepRun {
  /** 1-based position in the whole sweep (shards keep these ids) */
  id: number;
  /** the run's folder, relative to the sweep folder */
  dir: string;
  values: Record<string, number>;
  recipeSha256: string;
  /** mesh points of the run's plan: the work estimate the pool hands out the largest runs first by */
  meshPoints: number;
}

export interface SweepMatrix {
  parameters: Parameter[];
  runs: SweepRun[];
  /** identity of the whole sweep: the hash of every run's recipe hash, in order */
  sweepSha256: string;
  title: string | null;
  /** windows in the recipe: sweep.csv has one group of columns per window */
  windows: number;
  /** a 3D sweep: `windows` counts the recipe's rectangles */
  rectangles: boolean;
  /** with `electrical`: the labels of the per-bias columns (csv.ts) */
  electricalBiases?: string[];
  base: Record<string, unknown>;
}

export interface SweepRequest {
  widths?: string;
  /** `PATH=VALUES`, as given to --set */
  set: string[];
  /** work limits every run is planned under (default: the solver's) */
  limits?: PlanLimits;
}

/**
 * Collects the swept parameters. The recipe's own `sweep` key comes first; a flag for the same
 * parameter (--widths, or --set with the same path) replaces the recipe's values for it.
 */
export function sweepParameters(recipe: Recipe, request: SweepRequest): Parameter[] {
  const params: Parameter[] = [];
  const widths = request.widths !== undefined
    ? { label: '--widths', input: request.widths }
    : recipe.sweep?.widthsUm !== undefined ? { label: 'sweep.widthsUm', input: recipe.sweep.widthsUm } : null;
  if (widths) params.push({ name: WIDTH_PARAMETER, label: widths.label, values: parseValues(widths.input, widths.label), path: null });

  const byPath = new Map<string, Parameter>();
  const add = (pathText: string, label: string, input: string | number[], fromFlag: boolean) => {
    const path = parsePath(pathText, label);
    checkNumericPath(recipe, path, label);
    const name = formatPath(path);
    const param: Parameter = { name, label, values: parseValues(input, label), path };
    const earlier = byPath.get(name);
    if (earlier && fromFlag && earlier.label.startsWith('--set')) throw new UsageError(`${label}: ${name} is set twice (give each path one --set)`);
    if (earlier) params[params.indexOf(earlier)] = param;
    else params.push(param);
    byPath.set(name, param);
  };
  for (const [path, input] of Object.entries(recipe.sweep?.set ?? {})) add(path, `sweep.set[${JSON.stringify(path)}]`, input, false);
  for (const flag of request.set) {
    const eq = flag.indexOf('=');
    if (eq <= 0) throw new UsageError(`--set ${JSON.stringify(flag)}: expected PATH=VALUES, e.g. steps[1].minutes=30,60,120 or mask.windows[0][1]=10:2:20`);
    add(flag.slice(0, eq), `--set ${flag.slice(0, eq).trim()}`, flag.slice(eq + 1), true);
  }
  return params;
}

function describeValues(values: Record<string, number>): string {
  return Object.entries(values).map(([k, v]) => `${k}=${v}`).join(', ');
}

/**
 * Resizes every window to `width` about its own centre, after checking that the result stays
 * inside the cross-section and that no two windows touch.
 */
function resizeWindows(recipe: Record<string, unknown>, width: number, label: string, context: string): void {
  const section = recipe.crossSection as { widthUm: number };
  const mask = recipe.mask as { windows?: [number, number][] };
  if (mask.windows === undefined) {
    throw new UsageError(`${label}: resizes the windows of a 2D recipe (mask.windows); this recipe has mask.rectangles: sweep their sizes with --set, e.g. mask.rectangles[0][2]=8:1:12`);
  }
  const sectionWidth = section.widthUm;
  const centres = mask.windows.map(([x0, x1]) => 0.5 * (x0 + x1));
  let fit = Infinity;
  let why = '';
  centres.forEach((c, k) => {
    const room = 2 * Math.min(c, sectionWidth - c);
    if (room < fit) {
      fit = room;
      why = `mask.windows[${k}] is centred at ${tidy(c)} µm in a ${sectionWidth} µm cross-section`;
    }
  });
  const order = windowOrder(mask.windows).map((k) => ({ c: centres[k], k }));
  let gap = Infinity;
  let gapWhy = '';
  for (let m = 1; m < order.length; m++) {
    const g = order[m].c - order[m - 1].c;
    if (g < gap) {
      gap = g;
      gapWhy = `mask.windows[${order[m - 1].k}] and mask.windows[${order[m].k}] are centred ${tidy(g)} µm apart`;
    }
  }
  const allowed = gap <= fit
    ? `above 0 and below ${tidy(gap)} µm (${gapWhy}, and windows may not touch)`
    : `above 0 and up to ${tidy(fit)} µm (${why})`;
  if (!(width > 0) || width > fit || width >= gap) {
    throw new UsageError(`${label}: a window width of ${width} µm does not fit the cross-section${context}; allowed: ${allowed}`);
  }
  mask.windows = centres.map((c) => [tidy(c - width / 2), tidy(c + width / 2)]);
}

/** One run's recipe: the base without its sweep key, with this run's values in place. */
export function recipeForRun(base: Record<string, unknown>, parameters: readonly Parameter[], values: Record<string, number>, context = ''): Record<string, unknown> {
  const recipe = structuredClone(base);
  delete recipe.sweep;
  for (const p of parameters) if (p.path) setAt(recipe, p.path, values[p.name]);
  const width = parameters.find((p) => p.path === null);
  if (width) resizeWindows(recipe, values[width.name], width.label, context);
  return recipe;
}

export function runDir(id: number, total: number): string {
  return `run-${String(id).padStart(Math.max(4, String(total).length), '0')}`;
}

/**
 * Every run of the sweep, in order (the last parameter changes fastest), each validated as a
 * recipe and planned, so that a bad value stops the sweep before anything is written.
 */
export function buildMatrix(input: unknown, request: SweepRequest): SweepMatrix {
  const recipe = parseRecipe(input);
  const base = input as Record<string, unknown>;
  const parameters = sweepParameters(recipe, request);
  if (parameters.length === 0) {
    throw new UsageError('sweep needs something to sweep: --widths, --set PATH=VALUES, or a "sweep" key in the recipe');
  }
  const total = parameters.reduce((n, p) => n * p.values.length, 1);
  if (total > MAX_RUNS) {
    throw new UsageError(`the sweep would make ${total} runs (${parameters.map((p) => `${p.values.length} of ${p.name}`).join(' × ')}), more than the ${MAX_RUNS} allowed; split it into several sweeps`);
  }
  const runs: SweepRun[] = [];
  const biasLists: number[][] = [];
  const counter = new Array<number>(parameters.length).fill(0);
  for (let id = 1; id <= total; id++) {
    const values: Record<string, number> = {};
    parameters.forEach((p, k) => (values[p.name] = p.values[counter[k]]));
    const others = parameters.length > 1 ? ` in run ${id} (${describeValues(values)})` : '';
    const r = recipeForRun(base, parameters, values, others);
    let meshPoints: number;
    try {
      const parsed = parseRecipe(r);
      if (parsed.electrical) biasLists.push(parsed.electrical.biasV);
      const plan = withLimitHint(request.limits, () => planRecipe(parsed, request.limits));
      meshPoints = plan.mesh.nx * plan.mesh.nz;
    } catch (e) {
      if (e instanceof RecipeError) throw new UsageError(`sweep run ${id} (${describeValues(values)}): bad recipe: ${e.message}`);
      throw e;
    }
    runs.push({ id, dir: runDir(id, total), values, recipeSha256: recipeSha256(r), meshPoints });
    for (let k = parameters.length - 1; k >= 0; k--) {
      if (++counter[k] < parameters[k].values.length) break;
      counter[k] = 0;
    }
  }
  return {
    parameters, runs,
    sweepSha256: sha256(runs.map((r) => r.recipeSha256).join('\n')),
    title: recipe.title ?? null,
    windows: (recipe.mask.windows ?? recipe.mask.rectangles ?? []).length,
    rectangles: recipe.mask.rectangles !== undefined,
    ...(biasLists.length > 0 ? { electricalBiases: biasLabels(biasLists) } : {}),
    base,
  };
}
