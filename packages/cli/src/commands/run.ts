import { existsSync, statSync } from 'node:fs';
import { basename, extname, join } from 'node:path';
import { parseArgs } from 'node:util';
import { analyze, coarseReports, parseRecipe, planRecipe, simulate, withErrorBars, type Analysis, type Recipe, type Report } from '@edgewise/solver2d';
import { electricalTables } from '../electrical-table.ts';
import { UsageError } from '../errors.ts';
import { fmtLength, fmtPlusMinus, fmtRatio, fmtSci, table, terminalText } from '../format.ts';
import { LIMIT_OPTIONS, LIMITS_USAGE, parseLimits, withLimitHint } from '../limits.ts';
import { checkWritable, inside, outFolder, removeEmptyFolders, writeAtomic } from '../files.ts';
import { HELP_OPTION, type CommandSpec } from '../help.ts';
import { writeRunFolder } from '../output.ts';
import { progressReporter } from '../progress.ts';
import { readRecipeFile } from '../read-recipe.ts';

export const RUN_USAGE = `edgewise run RECIPE [--out DIR] [--error-solves 0|1|2] ${LIMITS_USAGE} [--quiet]`;

/** Coarser solves for the error bars: 1 (mesh 2h, formal order) or 2 (2h and 4h, measured order). */
const DEFAULT_ERROR_SOLVES = 2;

/** `--error-solves` and `--quiet`, as run, sweep and spacing take them. */
export const ERROR_SOLVES_OPTION = {
  'error-solves': {
    type: 'string', value: '0|1|2', defaultText: String(DEFAULT_ERROR_SOLVES),
    help: 'coarser solves for the error bars (±): 1 on a mesh twice as coarse (formal order 2), 2 on meshes 2 and 4 times as coarse (measured order, Richardson extrapolation), 0 for no error bars',
  },
} as const satisfies CommandSpec['options'];

export const QUIET_OPTION = {
  quiet: { type: 'boolean', default: false, help: 'print no progress on stderr (results still go to stdout); without it, a redrawn line on a terminal, a plain line every few seconds otherwise, no colour either way', defaultText: 'off' },
} as const satisfies CommandSpec['options'];

export const RUN_SPEC = {
  usage: RUN_USAGE,
  summary: 'Solves one recipe and its coarser error-bar solves, prints the results table (junction depth, lateral encroachment and reach, sheet and line resistance, spacing) on stdout and writes the run folder: report.json, field.npy, x.npy, z.npy, contour.csv, contour.svg and recipe.json. Exit codes: 0 ok, 2 bad input (one line naming the field), 1 internal failure.',
  arguments: [['RECIPE', 'the recipe file: JSON, or YAML for .yaml/.yml (`edgewise schema recipe` prints its JSON Schema)']],
  options: {
    out: { type: 'string', value: 'DIR', help: 'the folder to write the run into (created; files in it are replaced atomically)', defaultText: 'out/<recipe file name>/' },
    ...ERROR_SOLVES_OPTION,
    ...LIMIT_OPTIONS,
    ...QUIET_OPTION,
    ...HELP_OPTION,
  },
} as const satisfies CommandSpec;

/** `--error-solves`, for every command that takes it; `each` says per what ("per run" for a sweep). */
export function parseErrorSolves(text: string | undefined, each = ''): 0 | 1 | 2 {
  if (text === undefined) return DEFAULT_ERROR_SOLVES;
  if (text !== '0' && text !== '1' && text !== '2') {
    throw new UsageError(`--error-solves ${JSON.stringify(text)}: expected 0, 1 or 2 coarser solves${each ? ` ${each}` : ''} for the error bars (default ${DEFAULT_ERROR_SOLVES})`);
  }
  return Number(text) as 0 | 1 | 2;
}

export function defaultOutFolder(recipePath: string): string {
  return join('out', basename(recipePath, extname(recipePath)));
}

/**
 * A recipe's own `sweep` key, checked as `sweep` would check it (ranges, lists, paths), so
 * that a recipe one command accepts the other does not refuse. A single run ignores its values.
 * The sweep's code (which walks the recipe's JSON Schema) is loaded only for such a recipe.
 */
export async function checkSweepSection(recipe: Recipe): Promise<void> {
  if (recipe.sweep !== undefined) (await import('../sweep/matrix.ts')).sweepParameters(recipe, { set: [] });
}

export async function runCommand(args: string[]): Promise<number> {
  const { values, positionals } = parseArgs({ args, allowPositionals: true, strict: true, options: RUN_SPEC.options });
  const errorSolves = parseErrorSolves(values['error-solves']);
  const limits = parseLimits(values);
  if (positionals.length !== 1) throw new UsageError(`run takes one recipe file (usage: ${RUN_USAGE})`);
  const recipePath = positionals[0];
  const out = outFolder(values.out, defaultOutFolder(recipePath));
  if (existsSync(out) && !statSync(out).isDirectory()) throw new UsageError(`--out ${out}: is a file, not a folder`);
  const started = performance.now();
  const recipe = parseRecipe(await readRecipeFile(recipePath));
  await checkSweepSection(recipe);
  const plan = withLimitHint(limits, () => planRecipe(recipe, limits));
  const made = checkWritable(out);
  const progress = progressReporter(values.quiet ? null : process.stderr, 'solving');
  let sim;
  try {
    sim = withLimitHint(limits, () => simulate(plan, { onProgress: (p) => progress.update(p.done / p.total) }));
  } catch (e) {
    removeEmptyFolders(made);
    throw e;
  }
  progress.done();
  const analysis = analyze(sim);
  const solved = performance.now();
  if (errorSolves !== 0) {
    const coarse = progressReporter(values.quiet ? null : process.stderr, 'error bars');
    let level = 1;
    const reports = coarseReports(plan.recipe, {
      levels: errorSolves, limits, onLevel: (l) => { level = l; },
      onProgress: (p) => coarse.update((level - 1 + p.done / p.total) / errorSolves, `coarser solve ${level} of ${errorSolves}`),
    });
    coarse.done();
    analysis.report = withErrorBars([analysis.report, ...reports], plan.recipe);
  }
  // The recipe as validated, beside its results (`edgewise view` re-runs it in live mode),
  // written last as in a sweep's run folders, where it marks the run finished.
  const written = [...writeRunFolder(out, analysis), 'recipe.json'];
  writeAtomic(inside(out, 'recipe.json'), `${JSON.stringify(plan.recipe, null, 2)}\n`);
  const now = performance.now();
  const timing = { seconds: (now - started) / 1000, errorSeconds: errorSolves > 0 ? (now - solved) / 1000 : null };
  process.stdout.write(`${summary(analysis, timing.seconds, timing.errorSeconds)}\nwrote ${out}/: ${written.join(', ')}\n`);
  for (const w of analysis.report.warnings) process.stderr.write(`warning: ${terminalText(w)}\n`);
  return 0;
}

export function windowTable(report: Report): string {
  return table(
    ['window', 'x0 µm', 'x1 µm', 'xj µm', 'lateral L µm', 'lateral R µm', 'reach L µm', 'at z µm', 'reach R µm', 'at z µm', 'lateral/xj', 'surface cm^-3'],
    report.windows.map((w, k) => [
      String(k + 1), fmtLength(w.x0Um, 2), fmtLength(w.x1Um, 2), fmtPlusMinus(w.junctionDepthUm, w.errors?.junctionDepthUm),
      fmtPlusMinus(w.lateralLeftUm, w.errors?.lateralLeftUm), fmtPlusMinus(w.lateralRightUm, w.errors?.lateralRightUm),
      fmtPlusMinus(w.lateralReachLeftUm, w.errors?.lateralReachLeftUm), fmtDepth(w.lateralReachDepthLeftUm, w.errors?.lateralReachDepthLeftUm),
      fmtPlusMinus(w.lateralReachRightUm, w.errors?.lateralReachRightUm), fmtDepth(w.lateralReachDepthRightUm, w.errors?.lateralReachDepthRightUm),
      fmtRatio(w.lateralToVerticalRatio), fmtSci(w.surfaceConcentrationCm3),
    ]),
  );
}

/** 3D: per rectangle, the junction depth and the reach at each edge's middle and each corner (concave corners marked ^). */
export function rectangleTable(report: Report): string {
  const corner = (r: NonNullable<Report['rectangles']>[number], c: 'bottomLeft' | 'bottomRight' | 'topLeft' | 'topRight') =>
    `${fmtPlusMinus(r.cornerReachUm[c], r.errors?.cornerReachUm[c])}${r.cornerKind[c] === 'concave' ? ' ^' : ''}`;
  return table(
    ['rect', 'x0,y0 – x1,y1 µm', 'xj µm', 'left µm', 'right µm', 'bottom µm', 'top µm', 'corner BL µm', 'BR µm', 'TL µm', 'TR µm'],
    (report.rectangles ?? []).map((r, k) => [
      String(k + 1), `${fmtLength(r.x0Um, 2)},${fmtLength(r.y0Um, 2)} – ${fmtLength(r.x1Um, 2)},${fmtLength(r.y1Um, 2)}`,
      fmtPlusMinus(r.junctionDepthUm, r.errors?.junctionDepthUm),
      fmtPlusMinus(r.edgeReachUm.left, r.errors?.edgeReachUm.left), fmtPlusMinus(r.edgeReachUm.right, r.errors?.edgeReachUm.right),
      fmtPlusMinus(r.edgeReachUm.bottom, r.errors?.edgeReachUm.bottom), fmtPlusMinus(r.edgeReachUm.top, r.errors?.edgeReachUm.top),
      corner(r, 'bottomLeft'), corner(r, 'bottomRight'), corner(r, 'topLeft'), corner(r, 'topRight'),
    ]),
  );
}

/** A depth to the nm, with its error bar where that is at least half a nm (the report has the rest). */
function fmtDepth(v: number | null, e: number | null | undefined): string {
  return e !== null && e !== undefined && e >= 5e-4 ? fmtPlusMinus(v, e) : fmtLength(v);
}

/**
 * Where a junction bulges below the surface (its reach beyond the surface lateral by more
 * than the error bars), a line saying so, since W+2·lateral then uses the reach; '' otherwise.
 */
export function reachNote(report: Report): string {
  const notes: string[] = [];
  report.windows.forEach((w, k) => {
    const sides: string[] = [];
    for (const [lateral, reach, depth, eL, eR] of [
      [w.lateralLeftUm, w.lateralReachLeftUm, w.lateralReachDepthLeftUm, w.errors?.lateralLeftUm, w.errors?.lateralReachLeftUm],
      [w.lateralRightUm, w.lateralReachRightUm, w.lateralReachDepthRightUm, w.errors?.lateralRightUm, w.errors?.lateralReachRightUm],
    ] as const) {
      if (lateral === null || reach === null || depth === null) continue;
      if (reach - lateral > Math.max(1e-4, (eL ?? 0) + (eR ?? 0))) sides.push(`${reach.toFixed(3)} µm at ${depth.toFixed(3)} µm deep (surface ${lateral.toFixed(3)})`);
      else sides.push('');
    }
    if (sides.every((t) => t === '')) return;
    const both = sides.length === 2 && sides[0] === sides[1];
    notes.push(both ? `window ${k + 1} ${sides[0]} at both edges`
      : `window ${k + 1} ${sides.map((t, n) => (t ? `${n === 0 ? 'left' : 'right'} ${t}` : '')).filter(Boolean).join(', ')}`);
  });
  return notes.length === 0 ? '' : `the junction reaches further below the surface than at it: ${notes.join('; ')}; W+2·lateral uses the reach`;
}

/** A resistance to 4 significant figures, with its error bar to 1 where there is one. */
function fmtResistance(v: number | null | undefined, e: number | null | undefined): string {
  if (v === null || v === undefined) return '—';
  const shown = Number(v.toPrecision(4)).toString();
  return e === null || e === undefined ? shown : `${shown} ± ${Number(e.toPrecision(1))}`;
}

/** Sheet and line resistance, effective width and edge curvature, per window. */
export function resistanceTable(report: Report): string {
  return table(
    ['window', 'Rs Ω/sq', 'line Ω/µm', 'W eff µm', 'W+2·lateral µm', 'radius L µm', 'radius R µm'],
    report.windows.map((w, k) => [
      String(k + 1), fmtResistance(w.sheetResistanceOhmSq, w.errors?.sheetResistanceOhmSq), fmtResistance(w.lineResistanceOhmPerUm, w.errors?.lineResistanceOhmPerUm),
      fmtPlusMinus(w.effectiveWidthUm ?? null, w.errors?.effectiveWidthUm), fmtPlusMinus(w.drawnPlusLateralUm ?? null, w.errors?.drawnPlusLateralUm),
      fmtPlusMinus(w.curvatureRadiusLeftUm ?? null, w.errors?.curvatureRadiusLeftUm), fmtPlusMinus(w.curvatureRadiusRightUm ?? null, w.errors?.curvatureRadiusRightUm),
    ]),
  );
}

/** Each layer below the window centres, where some window has more than one (an emitter in a base, a source/drain in a well). */
export function layerTable(report: Report): string {
  const rows: string[][] = [];
  report.windows.forEach((w, k) => {
    (w.layerStack ?? []).forEach((l, n) => rows.push([
      String(k + 1), String(n + 1), l.type, fmtLength(l.topUm), fmtLength(l.bottomUm),
      fmtResistance(l.sheetResistanceOhmSq, l.errors?.sheetResistanceOhmSq), l.mobilityFit,
    ]));
  });
  return table(['window', 'layer', 'type', 'top µm', 'bottom µm', 'Rs Ω/sq', 'mobility fit'], rows);
}

/** Junction-to-junction spacing across each masked stripe between neighbouring windows. */
export function spacingTable(report: Report): string {
  return table(
    ['windows', 'stripe µm', 'surface gap µm', 'closest gap µm', 'at depth µm', 'merged'],
    (report.spacings ?? []).map((s) => [
      `${s.left + 1}–${s.right + 1}`, fmtLength(s.stripeUm, 2), fmtPlusMinus(s.surfaceGapUm, s.errors?.surfaceGapUm),
      fmtPlusMinus(s.minimumGapUm, s.errors?.minimumGapUm), fmtLength(s.minimumGapDepthUm), s.merged ? 'yes' : 'no',
    ]),
  );
}

/** How the error bars were scaled, in words an engineer can act on. */
function orderNote(order: number | null): string {
  if (order === null) return ', formal order 2';
  const shown = order.toFixed(2);
  if (Math.abs(order - 2) <= 0.2) return `, observed order ${shown}`;
  return order < 2
    ? `, observed order ${shown} (median): the coarser meshes converge more slowly than the scheme's order 2, so bars use safety factor 3 where a quantity's order is below 1.8`
    : `, observed order ${shown} (median): above the scheme's order 2, so bars use the cautious bound where a quantity's order is above 2.2`;
}

export function summary({ report }: Analysis, seconds: number, errorSeconds: number | null = null): string {
  const head = report.title ? `${terminalText(report.title)}\n` : '';
  const mesh = `mesh ${report.mesh.columns} × ${report.mesh.rows} (finest ${report.mesh.finestXUm} µm across, ${report.mesh.finestZUm} µm down), ` +
    `${report.steps.reduce((n, s) => n + s.timeSteps, 0)} time steps, ${seconds.toFixed(2)} s`;
  const doses = Object.entries(report.doseCm2)
    .map(([name, dose]) => `${name} ${fmtSci(dose)} cm^-2 (ledger imbalance ${fmtSci(report.ledger[name].relativeImbalance, 1)})`)
    .join('; ');
  const budgets = Object.entries(report.thermalBudgetUm2).map(([name, b]) => `${name} ${fmtSci(b)} µm²`).join('; ');
  const errors = report.errorEstimate
    ? `error bars (±): ${report.errorEstimate.meshes.length - 1} coarser solve(s), meshes ${report.errorEstimate.meshes.map((m) => `${m.columns} × ${m.rows}`).join(', ')}` +
      `${orderNote(report.errorEstimate.observedOrder)}` +
      `${errorSeconds === null ? '' : `, ${errorSeconds.toFixed(2)} s`}\n`
    : 'no error bars (--error-solves 0)\n';
  const spacing = report.spacings && report.spacings.length > 0 ? `\n\n${spacingTable(report)}` : '';
  const stacked = report.windows.some((w) => (w.layerStack?.length ?? 0) > 1) ? `\n\n${layerTable(report)}` : '';
  const mobility = report.mobility ? `\nmobility: ${report.mobility.carrier}s, ${report.mobility.fit} fit of ${report.mobility.source}` : '';
  if (report.rectangles) {
    const mesh3d = `mesh ${report.mesh.columns} × ${report.mesh.columnsY} × ${report.mesh.rows}${report.plan?.mirrorX || report.plan?.mirrorY ? ' (the part left by the mirror planes)' : ''} ` +
      `(finest ${report.mesh.finestXUm} µm across, ${report.mesh.finestZUm} µm down), ${report.steps.reduce((n, s) => n + s.timeSteps, 0)} time steps, ${seconds.toFixed(2)} s`;
    return `${head}${mesh3d}\n${errors}\n${rectangleTable(report)}\n\ndose per open area: ${doses}\nthermal budget ∫D dt: ${budgets}`;
  }
  const reach = reachNote(report);
  return `${head}${mesh}\n${errors}\n${windowTable(report)}\n${reach ? `${reach}\n` : ''}\n${resistanceTable(report)}${stacked}${spacing}${electricalTables(report)}\n\n` +
    `dose per open area: ${doses}\nthermal budget ∫D dt: ${budgets}${mobility}`;
}
