import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { edgewise, readCsv, tempDir } from '../support/cli.ts';
import { implantRecipe } from '../support/recipes.ts';

// An implant peaked 0.2 µm below the surface and annealed, in two 2 µm windows: its junction
// bulges sideways below the surface, so the reach exceeds the surface lateral. These tests
// check what the CLI shows and writes, not accuracy (test/reference/lateral-reach.test.ts).
const dir = tempDir('edgewise-reach-');
const implant = { doseCm2: 3e14, projectedRangeUm: 0.2, straggleUm: 0.04, lateralStraggleUm: 0.04 };
const recipe = implantRecipe({ widthUm: 7, windows: [[1, 3], [4, 6]], background: 1e16, implant, anneals: [{ temperatureC: 1000, minutes: 20 }], mesh: { refine: 0.5 } });
const recipePath = join(dir, 'implant.json');
writeFileSync(recipePath, JSON.stringify(recipe));

describe('edgewise run: lateral reach beside the surface lateral', () => {
  const out = join(dir, 'run');
  const result = edgewise(['run', recipePath, '--out', out, '--error-solves', '1']);
  const report = JSON.parse(readFileSync(join(out, 'report.json'), 'utf8'));
  const w = report.windows[0];

  it('the window table shows the reach and its depth with error bars, and says W+2·lateral uses the reach', () => {
    expect(result.code, result.stderr).toBe(0);
    for (const heading of ['lateral L µm', 'reach L µm', 'reach R µm', 'at z µm']) expect(result.stdout).toContain(heading);
    expect(w.lateralReachLeftUm).toBeGreaterThan(w.lateralLeftUm + 0.05);
    expect(w.errors.lateralReachLeftUm).toBeGreaterThan(0);
    expect(w.errors.lateralReachDepthLeftUm).toBeGreaterThanOrEqual(0);
    expect(result.stdout).toContain(`window 1 ${w.lateralReachLeftUm.toFixed(3)} µm at ${w.lateralReachDepthLeftUm.toFixed(3)} µm deep (surface ${w.lateralLeftUm.toFixed(3)}) at both edges`);
    expect(result.stdout).toContain('W+2·lateral uses the reach');
    expect(w.drawnPlusLateralUm).toBeCloseTo(2 + w.lateralReachLeftUm + w.lateralReachRightUm, 4);
  });

  it('contour.svg marks the lateral at the surface and the reach at its depth, with the report\'s numbers', () => {
    const svg = readFileSync(join(out, 'contour.svg'), 'utf8');
    expect(svg).toContain(`lateral ${w.lateralLeftUm.toFixed(3)} µm`);
    expect(svg).toContain(`reach ${w.lateralReachLeftUm.toFixed(3)} µm at ${w.lateralReachDepthLeftUm.toFixed(3)} µm`);
    // Four edges, each with both marks.
    expect(svg.match(/class="reach"/g)).toHaveLength(4);
    expect(svg.match(/class="lateral"/g)).toHaveLength(4);
  });
});

describe('edgewise sweep: sweep.csv carries every per-window number with its error', () => {
  const out = join(dir, 'sweep');
  const result = edgewise(['sweep', recipePath, '--set', 'steps[1].minutes=20', '--out', out, '--error-solves', '1', '--jobs', '1', '--quiet']);
  const rows = readCsv(join(out, 'sweep.csv'));
  const index = JSON.parse(readFileSync(join(out, 'sweep.json'), 'utf8'));
  const report = JSON.parse(readFileSync(join(out, index.runs[0].dir, 'report.json'), 'utf8'));

  it('one column per window for each number and its error bar, equal to the run\'s report', () => {
    expect(result.code, result.stderr).toBe(0);
    const fields = ['junctionDepthUm', 'lateralLeftUm', 'lateralRightUm', 'lateralReachLeftUm', 'lateralReachDepthLeftUm', 'lateralReachRightUm',
      'lateralReachDepthRightUm', 'surfaceConcentrationCm3', 'sheetResistanceOhmSq', 'lineResistanceOhmPerUm', 'effectiveWidthUm', 'drawnPlusLateralUm',
      'curvatureRadiusLeftUm', 'curvatureRadiusRightUm'];
    const errorName = (f: string) => f.replace(/(Um|OhmSq|OhmPerUm|Cm3)$/, 'Error$1');
    for (let k = 0; k < 2; k++) {
      const w = report.windows[k];
      for (const f of fields) {
        expect(Number(rows[0][`w${k + 1}.${f}`]), f).toBe(w[f]);
        expect(Number(rows[0][`w${k + 1}.${errorName(f)}`]), errorName(f)).toBe(w.errors[f]);
      }
      expect(Number(rows[0][`w${k + 1}.lateralToVerticalRatio`])).toBe(w.lateralToVerticalRatio);
    }
  });
});
