import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { reportSchema } from '../../packages/solver2d/src/report-schema.ts';
import { biasLabels, csvHeader } from '../../packages/cli/src/sweep/csv.ts';
import { edgewise, readCsv, tempDir } from '../support/cli.ts';
import { rmSync } from 'node:fs';

const dir = tempDir('edgewise-electrical-');
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** A small boron base in n-type silicon (demo scenario, invented), coarse enough to run in seconds. */
function recipe(electrical: unknown, substrateDopant = 'P'): Record<string, unknown> {
  return {
    title: 'small base with electrical rules (demo scenario)',
    substrate: { dopant: substrateDopant, concentrationCm3: 1e16 },
    crossSection: { widthUm: 12 },
    mask: { windows: [[4, 8]] },
    mesh: { refine: 0.5 },
    steps: [
      { kind: 'predeposition', dopant: 'B', surfaceConcentrationCm3: 1e19, temperatureC: 1000, minutes: 20 },
      { kind: 'drive-in', temperatureC: 1100, minutes: 20 },
    ],
    electrical,
  };
}

describe('electrical: bad input is one line, exit 2, nothing written', () => {
  const cases: [string, Record<string, unknown>, string][] = [
    ['a negative bias', recipe({ biasV: [5, -1] }), 'electrical.biasV[1]: must be a number from 0 to 5000 V (a reverse bias) (got -1)'],
    ['too long a bias list', recipe({ biasV: Array.from({ length: 17 }, (_, k) => k) }), 'electrical.biasV: must list at most 16 reverse biases'],
    ['a negative spacing bias', recipe({ biasV: [5], spacingBiasV: -1 }), 'electrical.spacingBiasV: must be a number from 0 to 5000 V (a reverse bias) (got -1)'],
    ['a recipe with no junction', recipe({ biasV: [5] }, 'B'),
      'electrical: needs a junction to reverse-bias, but every dopant of the recipe is an acceptor like the substrate\'s: add a dopant of the other type or remove electrical'],
  ];
  cases.forEach(([name, content, line], k) => {
    it(name, () => {
      const path = join(dir, `bad-${k}.json`);
      writeFileSync(path, JSON.stringify(content));
      const out = join(dir, `bad-out-${k}`);
      const r = edgewise(['run', path, '--out', out, '--quiet']);
      expect(r.code, r.stderr).toBe(2);
      expect(r.stderr).toBe(`edgewise: bad recipe: ${line}\n`);
      expect(existsSync(out)).toBe(false);
    });
  });
});

describe('electrical: a run reports and prints the electrical rules', () => {
  it('writes report.electrical valid against the schema, and prints the breakdown and per-bias tables', () => {
    const path = join(dir, 'base.json');
    writeFileSync(path, JSON.stringify(recipe({ biasV: [0, 10] })));
    const out = join(dir, 'base-out');
    const r = edgewise(['run', path, '--out', out, '--error-solves', '0']);
    expect(r.code, r.stderr).toBe(0);
    const report = reportSchema.parse(JSON.parse(readFileSync(join(out, 'report.json'), 'utf8')));
    const e = report.electrical!;
    expect(e.biasV).toEqual([0, 10]);
    const w = e.windows[0]!;
    expect(w.biasAgainst).toBe('substrate');
    // Common practice (no source): depletion widens and capacitance falls with reverse bias; the
    // curved edge breaks down before the flat bottom.
    expect(w.depletionDepthUm[1]!).toBeGreaterThan(w.depletionDepthUm[0]!);
    expect(w.areaCapacitanceFPerCm2[1]!).toBeLessThan(w.areaCapacitanceFPerCm2[0]!);
    expect(w.breakdownV!).toBeLessThan(w.breakdownPlaneV!);
    expect(w.errors?.breakdownV).not.toBeUndefined();
    expect(r.stdout).toMatch(/window +against +breakdown V +plane V +limited by/);
    expect(r.stdout).toMatch(/bias V +peak field V\/cm/);
  });
});

describe('electrical: edgewise spacing gives the punch-through spacing next to the metallurgical one', () => {
  it('writes punchThroughSpacingUm with its error bar to spacing.json and prints both rules', () => {
    const path = join(dir, 'pair.json');
    writeFileSync(path, JSON.stringify(recipe({ biasV: [0, 10], spacingBiasV: 3 })));
    const out = join(dir, 'pair-out');
    const r = edgewise(['spacing', path, '--gap', '0', '--tol', '0.02', '--error-solves', '1', '--out', out, '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    const s = JSON.parse(readFileSync(join(out, 'spacing.json'), 'utf8'));
    expect(s.punchThroughBiasV).toBe(3);
    // Common practice (no source): the depletion regions need more room than the junctions.
    expect(s.punchThroughSpacingUm).toBeGreaterThan(s.stripeUm);
    expect(s.punchThroughSpacingErrorUm).toBeGreaterThan(0);
    expect(s.punchThroughByMeshUm).toHaveLength(2);
    expect(s.punchThroughBracketUm[1] - s.punchThroughBracketUm[0]).toBeLessThanOrEqual(0.02);
    expect(s.punchThroughSolves.some((solve: { meets: boolean }) => !solve.meets)).toBe(true);
    expect(r.stdout).toMatch(/spacing rule +stripe µm/);
    expect(r.stdout).toMatch(/depletion regions apart at 3 V \(punch-through\) +[\d.]+ ± [\d.]+/);
  });
});

describe('electrical: sweep.csv has the electrical numbers, each with its error bar', () => {
  it('adds breakdown and per-bias columns whose values are the run folders\' report.json', () => {
    const path = join(dir, 'sweep.json');
    writeFileSync(path, JSON.stringify(recipe({ biasV: [0, 5] })));
    const out = join(dir, 'sweep-out');
    const r = edgewise(['sweep', path, '--set', 'electrical.biasV[1]=5,10', '--error-solves', '0', '--jobs', '2', '--out', out, '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    const rows = readCsv(join(out, 'sweep.csv'));
    const header = Object.keys(rows[0]);
    // The biases differ between the runs, so the per-bias columns are named by position.
    const perBias = ['peakFieldVPerCm', 'peakFieldErrorVPerCm', 'depletionDepthUm', 'depletionDepthErrorUm', 'depletionLateralUm', 'depletionLateralErrorUm',
      'areaCapacitanceFPerCm2', 'areaCapacitanceErrorFPerCm2', 'perimeterCapacitanceFPerCm', 'perimeterCapacitanceErrorFPerCm'];
    expect(header.slice(header.indexOf('curvatureRadiusRightErrorUm') + 1)).toEqual([
      'breakdownV', 'breakdownErrorV', 'breakdownPlaneV', 'breakdownPlaneErrorV', 'breakdownLimitedBy',
      ...perBias.map((c) => `${c}@bias1`), ...perBias.map((c) => `${c}@bias2`), 'status', 'error',
    ]);
    const sweep = JSON.parse(readFileSync(join(out, 'sweep.json'), 'utf8'));
    expect(sweep.electricalBiases).toEqual(['bias1', 'bias2']);
    rows.forEach((row, k) => {
      const e = JSON.parse(readFileSync(join(out, sweep.runs[k].dir, 'report.json'), 'utf8')).electrical;
      const w = e.windows[0];
      expect(e.biasV).toEqual([0, [5, 10][k]]);
      expect(Number(row.breakdownV)).toBe(w.breakdownV);
      expect(Number(row.breakdownErrorV)).toBe(w.errors.breakdownV);
      expect(row.breakdownLimitedBy).toBe(w.breakdownLimitedBy);
      expect(Number(row['peakFieldVPerCm@bias2'])).toBe(w.peakFieldVPerCm[1]);
      expect(Number(row['perimeterCapacitanceErrorFPerCm@bias2'])).toBe(w.errors.perimeterCapacitanceFPerCm[1]);
      expect(Number(row['depletionDepthUm@bias1'])).toBe(w.depletionDepthUm[0]);
    });
  });

  it('names the per-bias columns by the bias where every run has the same, after each window\'s group', () => {
    const header = csvHeader(['wUm'], 2, false, biasLabels([[0, 5], [0, 5]]));
    expect(header).toContain('w1.peakFieldVPerCm@5V');
    expect(header).toContain('w2.areaCapacitanceErrorFPerCm2@0V');
    expect(header.indexOf('w1.breakdownLimitedBy')).toBeLessThan(header.indexOf('w2.junctionDepthUm'));
    expect(biasLabels([[0, 5], [0, 10]])).toEqual(['bias1', 'bias2']);
  });
});
