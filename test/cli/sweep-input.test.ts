import { existsSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { edgewise, tempDir } from '../support/cli.ts';
import { filmRecipe } from '../support/recipes.ts';

/** A small recipe: a 24 µm cross-section, one window [8, 16] µm centred at 12 µm, two steps. */
const base = {
  ...filmRecipe({ widthUm: 24, windows: [[8, 16]], background: 1e15, dose: 1e13, temperatureC: 1100, minutes: 10 }),
  title: 'input checks (test)',
};

describe('edgewise sweep: bad input is one line naming it and what is allowed, exit 2, nothing written', () => {
  const dir = tempDir('edgewise-sweep-input-');
  const recipePath = join(dir, 'base.json');
  const twoWindows = join(dir, 'two-windows.json');
  const badSweepKey = join(dir, 'bad-sweep-key.json');

  beforeAll(() => {
    writeFileSync(recipePath, JSON.stringify(base));
    writeFileSync(twoWindows, JSON.stringify({ ...base, mask: { windows: [[4, 6], [10, 12]] } }));
    writeFileSync(badSweepKey, JSON.stringify({ ...base, sweep: { widthsUm: '1:x:3' } }));
  });

  const cases: { name: string; args: (paths: { recipe: string; two: string; badKey: string }) => string[]; message: RegExp }[] = [
    { name: 'a range with a zero step', args: (p) => [p.recipe, '--widths', '0.5:0:8'], message: /^edgewise: --widths "0\.5:0:8": the step must not be 0 \(a range is start:step:stop, e\.g\. 0\.5:0\.5:8\)$/ },
    { name: 'a range with two parts', args: (p) => [p.recipe, '--widths', '1:2'], message: /^edgewise: --widths "1:2": a range has three parts, start:step:stop/ },
    { name: 'a range that runs the wrong way', args: (p) => [p.recipe, '--widths', '8:1:1'], message: /^edgewise: --widths "8:1:1": a step of 1 never gets from 8 to 1/ },
    { name: 'a list with a word in it', args: (p) => [p.recipe, '--widths', '1,two,4'], message: /^edgewise: --widths "1,two,4": item 2 "two" is not a number \(expected a range start:step:stop such as 0\.5:0\.5:8, or a list such as 1,2,4,8\)$/ },
    { name: 'a malformed range in --set', args: (p) => [p.recipe, '--set', 'steps[1].minutes=10::30'], message: /^edgewise: --set steps\[1\]\.minutes "10::30": the step "" is not a number/ },
    { name: 'a malformed range in the recipe\'s sweep key', args: (p) => [p.badKey], message: /^edgewise: sweep\.widthsUm "1:x:3": the step "x" is not a number/ },
    { name: 'an unknown field in --set', args: (p) => [p.recipe, '--set', 'steps[1].minuts=30,60'], message: /^edgewise: --set steps\[1\]\.minuts: unknown recipe path "steps\[1\]\.minuts": steps\[1\] \(a drive-in step\) has no field "minuts" that holds numbers \(allowed: temperatureC, minutes\)$/ },
    { name: 'a step the recipe does not have', args: (p) => [p.recipe, '--set', 'steps[5].minutes=30'], message: /^edgewise: --set steps\[5\]\.minutes: unknown recipe path "steps\[5\]\.minutes": steps has 2 items \(indices 0 to 1\)$/ },
    { name: 'an unknown top-level key', args: (p) => [p.recipe, '--set', 'oven.minutes=30'], message: /^edgewise: --set oven\.minutes: unknown recipe path "oven\.minutes": recipe has no field "oven" that holds numbers \(allowed: substrate, crossSection, mask, dopants, mesh, numerics, electrical, steps\)$/ },
    { name: 'a path through an object\'s prototype', args: (p) => [p.recipe, '--set', 'dopants.__proto__.D0Cm2PerS=1'], message: /^edgewise: --set dopants\.__proto__\.D0Cm2PerS: "__proto__" cannot be part of a recipe path$/ },
    { name: 'a field that is not numeric', args: (p) => [p.recipe, '--set', 'steps[0].dopant=1,2'], message: /^edgewise: --set steps\[0\]\.dopant: unknown recipe path "steps\[0\]\.dopant": steps\[0\] \(a film step\) has no field "dopant" that holds numbers \(allowed: doseCm2, temperatureC, minutes\)$/ },
    { name: 'a --set without values', args: (p) => [p.recipe, '--set', 'steps[1].minutes'], message: /^edgewise: --set "steps\[1\]\.minutes": expected PATH=VALUES/ },
    // Centred at 12 µm in a 24 µm cross-section, the window may be at most 24 µm wide.
    { name: 'a width that no longer fits the cross-section', args: (p) => [p.recipe, '--widths', '2,4,30'], message: /^edgewise: --widths: a window width of 30 µm does not fit the cross-section; allowed: above 0 and up to 24 µm \(mask\.windows\[0\] is centred at 12 µm in a 24 µm cross-section\)$/ },
    // Windows centred at 5 and 11 µm touch once they are 6 µm wide.
    { name: 'a width at which two windows touch', args: (p) => [p.two, '--widths', '1:1:6'], message: /^edgewise: --widths: a window width of 6 µm does not fit the cross-section; allowed: above 0 and below 6 µm \(mask\.windows\[0\] and mask\.windows\[1\] are centred 6 µm apart, and windows may not touch\)$/ },
    { name: 'a value outside the field\'s range', args: (p) => [p.recipe, '--widths', '2,4', '--set', 'steps[1].minutes=30,-5'], message: /^edgewise: sweep run 2 \(windowWidthUm=2, steps\[1\]\.minutes=-5\): bad recipe: steps\[1\]\.minutes: must be a number above 0 and up to 1e5 minutes \(got -5\)$/ },
    // Runs 1–3 fit; only the last, a 17 µm window centred at 12 µm in a 20 µm cross-section, does not (room: 2·8 µm).
    { name: 'a width that fits every run but the last', args: (p) => [p.recipe, '--widths', '2,17', '--set', 'crossSection.widthUm=30,20'], message: /^edgewise: --widths: a window width of 17 µm does not fit the cross-section in run 4 \(windowWidthUm=17, crossSection\.widthUm=20\); allowed: above 0 and up to 16 µm \(mask\.windows\[0\] is centred at 12 µm in a 20 µm cross-section\)$/ },
    { name: 'a bad --shard', args: (p) => [p.recipe, '--widths', '2', '--shard', '4/3'], message: /^edgewise: --shard "4\/3": expected K\/N with N from 1 to 10000 and K from 1 to N/ },
    { name: 'a bad --error-solves', args: (p) => [p.recipe, '--widths', '2', '--error-solves', '3'], message: /^edgewise: --error-solves "3": expected 0, 1 or 2 coarser solves per run for the error bars \(default 2\)$/ },
    { name: 'a bad --jobs', args: (p) => [p.recipe, '--widths', '2', '--jobs', 'many'], message: /^edgewise: --jobs "many": expected a whole number from 1 to 256/ },
    { name: 'nothing to sweep', args: (p) => [p.recipe], message: /^edgewise: sweep needs something to sweep: --widths, --set PATH=VALUES, or a "sweep" key in the recipe$/ },
  ];

  for (const c of cases) {
    it(c.name, () => {
      const out = join(dir, `out-${cases.indexOf(c)}`);
      const r = edgewise(['sweep', ...c.args({ recipe: recipePath, two: twoWindows, badKey: badSweepKey }), '--out', out]);
      expect(r.code).toBe(2);
      expect(r.stdout).toBe('');
      const lines = r.stderr.trimEnd().split('\n');
      expect(lines).toHaveLength(1);
      expect(lines[0]).toMatch(c.message);
      // Every run's recipe is checked before any starts: not even the output folder exists.
      expect(existsSync(out)).toBe(false);
    });
  }
});

describe('edgewise sweep: parameters from flags and from the recipe', () => {
  const dir = tempDir('edgewise-sweep-params-');

  it('several flags make a cartesian product, the last parameter changing fastest, each run\'s recipe.json holding its values', () => {
    writeFileSync(join(dir, 'base.json'), JSON.stringify(base));
    const out = join(dir, 'product');
    const r = edgewise(['sweep', join(dir, 'base.json'), '--widths', '1,2', '--set', 'steps[1].minutes=5,10', '--set', 'dopants.Q.D0Cm2PerS=1', '--out', out, '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    const index = JSON.parse(readFileSync(join(out, 'sweep.json'), 'utf8'));
    expect(index.parameters).toEqual(['windowWidthUm', 'steps[1].minutes', 'dopants.Q.D0Cm2PerS']);
    expect(index.runs.map((run: { values: Record<string, number> }) => Object.values(run.values))).toEqual([[1, 5, 1], [1, 10, 1], [2, 5, 1], [2, 10, 1]]);
    expect(readFileSync(join(out, 'sweep.csv'), 'utf8').split('\n')[0]).toBe(
      'id,windowWidthUm,steps[1].minutes,dopants.Q.D0Cm2PerS,junctionDepthUm,junctionDepthErrorUm,lateralLeftUm,lateralLeftErrorUm,' +
      'lateralRightUm,lateralRightErrorUm,lateralReachLeftUm,lateralReachLeftErrorUm,lateralReachDepthLeftUm,lateralReachDepthLeftErrorUm,' +
      'lateralReachRightUm,lateralReachRightErrorUm,lateralReachDepthRightUm,lateralReachDepthRightErrorUm,lateralToVerticalRatio,' +
      'surfaceConcentrationCm3,surfaceConcentrationErrorCm3,sheetResistanceOhmSq,sheetResistanceErrorOhmSq,' +
      'lineResistanceOhmPerUm,lineResistanceErrorOhmPerUm,effectiveWidthUm,effectiveWidthErrorUm,drawnPlusLateralUm,drawnPlusLateralErrorUm,' +
      'curvatureRadiusLeftUm,curvatureRadiusLeftErrorUm,curvatureRadiusRightUm,curvatureRadiusRightErrorUm,status,error');
    const third = JSON.parse(readFileSync(join(out, index.runs[2].dir, 'recipe.json'), 'utf8'));
    expect(third.mask.windows).toEqual([[11, 13]]);
    expect(third.steps[1].minutes).toBe(5);
    expect(third.sweep).toBeUndefined();
    // A run folder's recipe.json is a recipe `edgewise run` takes as it is, and gives the same report.
    const again = edgewise(['run', join(out, index.runs[2].dir, 'recipe.json'), '--out', join(dir, 'again'), '--quiet']);
    expect(again.code, again.stderr).toBe(0);
    const fromRun = JSON.parse(readFileSync(join(dir, 'again', 'report.json'), 'utf8'));
    const fromSweep = JSON.parse(readFileSync(join(out, index.runs[2].dir, 'report.json'), 'utf8'));
    expect(fromRun.windows).toEqual(fromSweep.windows);
  });

  it('the recipe\'s own sweep key works, and a flag replaces the recipe\'s values for its parameter only', () => {
    const path = join(dir, 'with-sweep.json');
    writeFileSync(path, JSON.stringify({ ...base, sweep: { widthsUm: [1, 2], set: { 'steps[1].minutes': '5:5:10' } } }));
    const out = join(dir, 'override');
    const r = edgewise(['sweep', path, '--widths', '3', '--out', out, '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    const index = JSON.parse(readFileSync(join(out, 'sweep.json'), 'utf8'));
    expect(index.runs.map((run: { values: Record<string, number> }) => run.values)).toEqual([
      { windowWidthUm: 3, 'steps[1].minutes': 5 },
      { windowWidthUm: 3, 'steps[1].minutes': 10 },
    ]);
    expect(readdirSync(out).sort()).toEqual(['run-0001', 'run-0002', 'sweep.csv', 'sweep.json']);
  });

  it('--resume keeps runs made with the same --error-solves and redoes those made with another', () => {
    const path = join(dir, 'resume.json');
    writeFileSync(path, JSON.stringify(base));
    const out = join(dir, 'resume');
    const args = ['sweep', path, '--widths', '1,2', '--out', out, '--resume'];
    expect(edgewise([...args, '--error-solves', '0']).code).toBe(0);
    const same = edgewise([...args, '--error-solves', '0']);
    expect(same.stderr).toContain('2 runs: 2 ok (2 already finished)');
    const other = edgewise([...args, '--error-solves', '1']);
    expect(other.code, other.stderr).toBe(0);
    expect(other.stderr).toMatch(/2 runs: 2 ok, 0 failed/);
    const report = JSON.parse(readFileSync(join(out, 'run-0001', 'report.json'), 'utf8'));
    expect(report.errorEstimate.meshes).toHaveLength(2);
    expect(readFileSync(join(out, 'sweep.csv'), 'utf8').split('\n')[1].split(',')[3]).not.toBe('');
  });

  it('`edgewise schema recipe` describes the sweep key, and the usage lists sweep and merge', () => {
    const r = edgewise(['schema', 'recipe']);
    expect(r.code).toBe(0);
    const schema = JSON.parse(r.stdout);
    expect(Object.keys(schema.properties.sweep.properties).sort()).toEqual(['set', 'widthsUm']);
    const help = edgewise(['--help']);
    expect(help.stdout).toContain('edgewise sweep RECIPE [--widths RANGE] [--set PATH=VALUES]');
    expect(help.stdout).toContain('edgewise merge DIR…');
  });
});

describe('the sweep worker', () => {
  it('loads no schema library: the main thread validates every run before any starts, and the workers plan what it validated', () => {
    // The launcher bundles the worker beside the CLI on its first start.
    expect(edgewise(['--help']).code).toBe(0);
    const bundle = readFileSync(join(import.meta.dirname, '..', '..', 'packages', 'cli', 'dist', 'sweep', 'run.worker.mjs'), 'utf8');
    expect(bundle).toContain('planRecipe');
    expect(bundle).not.toContain('ZodError');
  });
});
