import { basename, extname, join } from 'node:path';
import { parseArgs } from 'node:util';
import { analyze, parseRecipe, planRecipe, simulate, type Analysis, type Report } from '@edgewise/solver2d';
import { UsageError } from '../errors.ts';
import { fmtLength, fmtRatio, fmtSci, table } from '../format.ts';
import { writeRunFolder } from '../output.ts';
import { progressReporter } from '../progress.ts';
import { readRecipeFile } from '../read-recipe.ts';

export const RUN_USAGE = 'edgewise run RECIPE [--out DIR] [--quiet]';

export function defaultOutFolder(recipePath: string): string {
  return join('out', basename(recipePath, extname(recipePath)));
}

export function runCommand(args: string[]): number {
  const { values, positionals } = parseArgs({
    args, allowPositionals: true, strict: true,
    options: { out: { type: 'string' }, quiet: { type: 'boolean', default: false } },
  });
  if (positionals.length !== 1) throw new UsageError(`run takes one recipe file (usage: ${RUN_USAGE})`);
  const recipePath = positionals[0];
  const out = values.out ?? defaultOutFolder(recipePath);
  const started = performance.now();
  const plan = planRecipe(parseRecipe(readRecipeFile(recipePath)));
  const progress = progressReporter(values.quiet ? null : process.stderr, 'solving');
  const sim = simulate(plan, { onProgress: (p) => progress.update(p.done / p.total) });
  progress.done();
  const analysis = analyze(sim);
  const written = writeRunFolder(out, analysis);
  const seconds = (performance.now() - started) / 1000;
  process.stdout.write(`${summary(analysis, seconds)}\nwrote ${out}/: ${written.join(', ')}\n`);
  for (const w of analysis.report.warnings) process.stderr.write(`warning: ${w}\n`);
  return 0;
}

export function windowTable(report: Report): string {
  return table(
    ['window', 'x0 µm', 'x1 µm', 'xj µm', 'lateral L µm', 'lateral R µm', 'lateral/xj', 'surface cm^-3'],
    report.windows.map((w, k) => [
      String(k + 1), fmtLength(w.x0Um, 2), fmtLength(w.x1Um, 2), fmtLength(w.junctionDepthUm),
      fmtLength(w.lateralLeftUm), fmtLength(w.lateralRightUm), fmtRatio(w.lateralToVerticalRatio),
      fmtSci(w.surfaceConcentrationCm3),
    ]),
  );
}

export function summary({ report }: Analysis, seconds: number): string {
  const head = report.title ? `${report.title}\n` : '';
  const mesh = `mesh ${report.mesh.columns} × ${report.mesh.rows} (finest ${report.mesh.finestXUm} µm across, ${report.mesh.finestZUm} µm down), ` +
    `${report.steps.reduce((n, s) => n + s.timeSteps, 0)} time steps, ${seconds.toFixed(2)} s`;
  const doses = Object.entries(report.doseCm2)
    .map(([name, dose]) => `${name} ${fmtSci(dose)} cm^-2 (ledger imbalance ${fmtSci(report.ledger[name].relativeImbalance, 1)})`)
    .join('; ');
  const budgets = Object.entries(report.thermalBudgetUm2).map(([name, b]) => `${name} ${fmtSci(b)} µm²`).join('; ');
  return `${head}${mesh}\n\n${windowTable(report)}\n\ndose per open area: ${doses}\nthermal budget ∫D dt: ${budgets}`;
}
