import { basename, extname, join } from 'node:path';
import { parseArgs } from 'node:util';
import {
  analyze, parseRecipe, planRecipe, PunchThroughError, searchPunchThroughWithError, searchStripeWithError, simulate, spacingBiasOf, SPACING_SCHEMA_ID,
  StripeSearchError, type PunchThroughSearchWithError, type Recipe, type StripeSearchWithError,
} from '@edgewise/solver2d';
import { UsageError } from '../errors.ts';
import { HELP_OPTION, type CommandSpec } from '../help.ts';
import { checkWritable, inside, outFolder, writeAtomic } from '../files.ts';
import { fmtLength, fmtPlusMinus, table, terminalText } from '../format.ts';
import { writeRunFolder } from '../output.ts';
import { readRecipeFile } from '../read-recipe.ts';
import { checkSweepSection, ERROR_SOLVES_OPTION, parseErrorSolves, QUIET_OPTION } from './run.ts';

export const SPACING_USAGE = 'edgewise spacing RECIPE --gap G [--tol T] [--out DIR] [--error-solves 0|1|2] [--quiet]';

const GAP_RANGE_UM = [0, 1000] as const;
const TOL_RANGE_UM = [1e-4, 10] as const;
const DEFAULT_TOL_UM = 0.01;
const RANGES: Record<string, readonly [number, number]> = { '--gap': GAP_RANGE_UM, '--tol': TOL_RANGE_UM };

function number(option: string, text: string | undefined, [lo, hi]: readonly [number, number], fallback?: number): number {
  if (text === undefined) {
    if (fallback !== undefined) return fallback;
    throw new UsageError(`${option}: is required: a number from ${lo} to ${hi} µm (usage: ${SPACING_USAGE})`);
  }
  const v = Number(text);
  if (text.trim() === '' || !Number.isFinite(v) || v < lo || v > hi) throw new UsageError(`${option}: must be a number from ${lo} to ${hi} µm (got ${JSON.stringify(text)})`);
  return v;
}

export const SPACING_SPEC = {
  usage: SPACING_USAGE,
  summary: 'Finds, by bisection, the narrowest masked stripe between two windows of the recipe (its first two, or its one window twice; in 3D the distance between its first two rectangles) that keeps their junctions at least the gap apart, with an error bar from the same search on coarser meshes; writes spacing.json and the run folder of the pair at the answer.',
  arguments: [['RECIPE', 'the recipe file: JSON, or YAML for .yaml/.yml']],
  options: {
    gap: { type: 'string', value: 'G', help: `the junction-to-junction gap to keep, µm, from ${GAP_RANGE_UM[0]} to ${GAP_RANGE_UM[1]} (required)` },
    tol: { type: 'string', value: 'T', help: `the bisection's tolerance on the stripe, µm, from ${TOL_RANGE_UM[0]} to ${TOL_RANGE_UM[1]}`, defaultText: String(DEFAULT_TOL_UM) },
    out: { type: 'string', value: 'DIR', help: 'the folder to write spacing.json and the run folder into', defaultText: 'out/<recipe file name>-spacing/' },
    ...ERROR_SOLVES_OPTION,
    quiet: { ...QUIET_OPTION.quiet, help: 'print nothing on stderr; without it, one line per solve of the search' },
    ...HELP_OPTION,
  },
} as const satisfies CommandSpec;

/** parseArgs, with its complaints (some span lines, e.g. "--gap -1") made into one line. */
function parse(args: string[]) {
  try {
    return parseArgs({ args, allowPositionals: true, strict: true, options: SPACING_SPEC.options });
  } catch (e) {
    if (!(e instanceof TypeError && (e as { code?: string }).code?.startsWith('ERR_PARSE_ARGS'))) throw e;
    const k = args.findIndex((a, i) => i > 0 && /^-\d/.test(a) && args[i - 1] in RANGES);
    if (k > 0) {
      const [lo, hi] = RANGES[args[k - 1]];
      throw new UsageError(`${args[k - 1]}: must be a number from ${lo} to ${hi} µm (got ${JSON.stringify(args[k])})`);
    }
    throw new UsageError(`${e.message.split('\n')[0]} (usage: ${SPACING_USAGE})`);
  }
}

export async function spacingCommand(args: string[]): Promise<number> {
  const { values, positionals } = parse(args);
  if (positionals.length !== 1) throw new UsageError(`spacing takes one recipe file (usage: ${SPACING_USAGE})`);
  const gapUm = number('--gap', values.gap, GAP_RANGE_UM);
  const toleranceUm = number('--tol', values.tol, TOL_RANGE_UM, DEFAULT_TOL_UM);
  const errorSolves = parseErrorSolves(values['error-solves']);
  const recipePath = positionals[0];
  const out = outFolder(values.out, join('out', `${basename(recipePath, extname(recipePath))}-spacing`));
  const recipe = parseRecipe(await readRecipeFile(recipePath));
  await checkSweepSection(recipe);
  planRecipe(recipe); // bad recipes fail here, before any search
  checkWritable(out);
  const log = values.quiet ? null : process.stderr;
  const windowCount = recipe.mask.windows?.length ?? 0;
  if (windowCount > 2) log?.write(`note: the search uses the first two windows of the recipe (by x) and drops the other ${windowCount - 2}\n`);
  const started = performance.now();
  let mesh = 'h';
  let result: StripeSearchWithError;
  try {
    result = searchStripeWithError(recipe, {
      gapUm, toleranceUm, levels: errorSolves,
      onLevel: (level) => { mesh = `${2 ** level}h`; },
      onSolve: (s, k) => log?.write(`  mesh ${mesh}, solve ${k + 1}: stripe ${s.stripeUm.toFixed(4)} µm → ${s.spacing.merged ? 'merged' : `closest gap ${fmtLength(s.spacing.minimumGapUm, 4)} µm`}${s.meets ? ' (meets)' : ''}\n`),
    });
  } catch (e) {
    if (e instanceof StripeSearchError) throw new UsageError(`--gap: ${e.message}; ask for a smaller gap`);
    throw e;
  }
  const punch = punchThrough(recipe, toleranceUm, errorSolves, log);
  // The pair's run folder shows its junctions; its electrical rules (a breakdown search per window) would cost more than the searches.
  const { electrical: _electrical, ...pair } = result.recipe;
  void _electrical;
  const analysis = analyze(simulate(planRecipe(pair)));
  const seconds = (performance.now() - started) / 1000;
  const file = {
    schema: SPACING_SCHEMA_ID,
    title: recipe.title ?? null,
    gapUm, toleranceUm,
    stripeUm: result.stripeUm,
    stripeErrorUm: result.stripeErrorUm,
    bracketUm: result.bracketUm,
    stripesByMeshUm: result.stripesByMeshUm,
    ...(result.recipe.mask.rectangles ? { rectangles: result.recipe.mask.rectangles, crossSectionLengthUm: result.recipe.crossSection.lengthUm } : { windows: result.recipe.mask.windows }),
    crossSectionWidthUm: result.recipe.crossSection.widthUm,
    spacing: result.spacing,
    solves: result.solves.map((s) => ({ stripeUm: s.stripeUm, merged: s.spacing.merged, minimumGapUm: s.spacing.minimumGapUm, meets: s.meets })),
    ...(punch ? {
      punchThroughBiasV: punch.biasV,
      punchThroughSpacingUm: punch.stripeUm,
      punchThroughSpacingErrorUm: punch.stripeErrorUm,
      punchThroughBracketUm: punch.bracketUm,
      punchThroughByMeshUm: punch.stripesByMeshUm,
      punchThroughSolves: punch.solves,
    } : {}),
  };
  const written = writeRunFolder(out, analysis);
  writeAtomic(inside(out, 'spacing.json'), `${JSON.stringify(file, null, 2)}\n`);
  const error = result.stripeErrorUm;
  const s = result.spacing;
  process.stdout.write([
    `${recipe.title ? `${terminalText(recipe.title)}\n` : ''}narrowest masked ${recipe.mask.rectangles ? 'distance between the two rectangles (corner to corner, or to an edge, as they face)' : 'stripe'} keeping a junction-to-junction gap ≥ ${gapUm} µm${recipe.mask.rectangles ? ' at the surface' : ''}: ${fmtPlusMinus(result.stripeUm, error)} µm`,
    `bisection to ${toleranceUm} µm: fails at ${fmtLength(result.bracketUm[0], 4)} µm, meets at ${fmtLength(result.bracketUm[1], 4)} µm (${result.solves.length} solves on the default mesh)`,
    `at that stripe: surface gap ${fmtLength(s.surfaceGapUm, 4)} µm, closest approach ${fmtLength(s.minimumGapUm, 4)} µm at depth ${fmtLength(s.minimumGapDepthUm, 4)} µm`,
    error === null ? 'no error bar (--error-solves 0)' : `the same search on meshes ${meshNames(result.stripesByMeshUm)}: ${result.stripesByMeshUm.map((v) => v.toFixed(4)).join(', ')} µm (± from Richardson extrapolation)`,
    ...(punch ? punchThroughLines(punch, result) : []),
    `${seconds.toFixed(1)} s; wrote ${out}/: spacing.json, ${written.join(', ')}`,
  ].join('\n') + '\n');
  return 0;
}

function meshNames(answers: readonly number[]): string {
  return answers.map((_, k) => (k === 0 ? 'h' : `${2 ** k}h`)).join(', ');
}

/** With `electrical` in the recipe: the punch-through spacing at its spacing bias, searched as the stripe is. */
function punchThrough(recipe: Recipe, toleranceUm: number, levels: 0 | 1 | 2, log: NodeJS.WriteStream | null): PunchThroughSearchWithError | null {
  const biasV = spacingBiasOf(recipe);
  if (biasV === null || recipe.mask.rectangles) return null;
  let mesh = 'h';
  try {
    return searchPunchThroughWithError(recipe, {
      biasV, toleranceUm, levels,
      onLevel: (level) => { mesh = `${2 ** level}h`; },
      onSolve: (s, k) => log?.write(`  punch-through at ${biasV} V, mesh ${mesh}, solve ${k + 1}: stripe ${s.stripeUm.toFixed(4)} µm → ${s.merged ? 'merged' : s.meets ? `apart, neutral gap ${fmtLength(s.neutralGapUm, 4)} µm at the surface` : 'depletion regions touch'}\n`),
    });
  } catch (e) {
    if (e instanceof PunchThroughError) throw new UsageError(`electrical: ${e.message}`);
    if (e instanceof StripeSearchError) throw new UsageError(`electrical.spacingBiasV: ${e.message}; ask for a lower bias`);
    throw e;
  }
}

/** The two spacings side by side: metallurgical (the gap asked) and electrical (punch-through). */
function punchThroughLines(punch: PunchThroughSearchWithError, metallurgical: StripeSearchWithError): string[] {
  return [
    table(['spacing rule', 'stripe µm', 'bracket µm', 'on meshes h, 2h, … µm'], [
      [`junctions ${metallurgical.gapUm} µm apart (metallurgical)`, fmtPlusMinus(metallurgical.stripeUm, metallurgical.stripeErrorUm),
        `${fmtLength(metallurgical.bracketUm[0], 4)}–${fmtLength(metallurgical.bracketUm[1], 4)}`, metallurgical.stripesByMeshUm.map((v) => v.toFixed(4)).join(', ')],
      [`depletion regions apart at ${punch.biasV} V (punch-through)`, fmtPlusMinus(punch.stripeUm, punch.stripeErrorUm),
        `${fmtLength(punch.bracketUm[0], 4)}–${fmtLength(punch.bracketUm[1], 4)}`, punch.stripesByMeshUm.map((v) => v.toFixed(4)).join(', ')],
    ]),
  ];
}
