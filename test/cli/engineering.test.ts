import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { parse as parseNpy } from 'npyjs';
import { describe, expect, it } from 'vitest';
import { runRecipe, stackLayers } from '../../packages/solver2d/src/index.ts';
import { reportSchema } from '../../packages/solver2d/src/report-schema.ts';
import { edgewise, tempDir } from '../support/cli.ts';
import { filmRecipe } from '../support/recipes.ts';

// A small film-and-drive-in recipe on half the default mesh density: these tests check files
// and messages, not accuracy.
const dir = tempDir();
const recipe = filmRecipe({ widthUm: 16, windows: [[6, 10]], dose: 1e15, background: 1e16, temperatureC: 1050, minutes: 30, mesh: { refine: 0.5 } });
const recipePath = join(dir, 'film.json');
writeFileSync(recipePath, JSON.stringify(recipe));

const readNpy = (path: string) => {
  const bytes = readFileSync(path);
  return parseNpy(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength));
};

describe('edgewise run: error bars and exports', () => {
  const out = join(dir, 'run');
  const result = edgewise(['run', recipePath, '--out', out]);
  const report = JSON.parse(readFileSync(join(out, 'report.json'), 'utf8'));

  it('prints every length with its error bar and says how the bars were made', () => {
    expect(result.code, result.stderr).toBe(0);
    expect(result.stdout).toMatch(/\d\.\d+ ± \d\.\d+/);
    expect(result.stdout).toContain('error bars (±): 2 coarser solve(s)');
    for (const heading of ['Rs Ω/sq', 'line Ω/µm', 'W eff µm', 'radius L µm']) expect(result.stdout).toContain(heading);
  });

  it('report.json carries the error bars and passes the strict report schema', () => {
    expect(() => reportSchema.parse(report)).not.toThrow();
    const w = report.windows[0];
    for (const key of ['junctionDepthUm', 'lateralLeftUm', 'lateralRightUm']) expect(w.errors[key]).toBeGreaterThan(0);
    expect(report.errorEstimate.meshes.map((m: { refine: number }) => m.refine)).toEqual([0.5, 0.25, 0.125]);
  });

  it('field.npy, x.npy and z.npy read back by npyjs (a general-purpose reader) equal the solved field and mesh', () => {
    const expected = runRecipe(recipe);
    const field = readNpy(join(out, 'field.npy'));
    expect(field.dtype).toBe('f8');
    expect(field.fortranOrder).toBe(false);
    expect(field.shape).toEqual(report.field.shape);
    expect(Array.from(field.data as Float64Array)).toEqual(Array.from(stackLayers(expected.field)));
    expect(Array.from(readNpy(join(out, 'x.npy')).data as Float64Array)).toEqual(Array.from(expected.field.mesh.x));
    expect(Array.from(readNpy(join(out, 'z.npy')).data as Float64Array)).toEqual(Array.from(expected.field.mesh.z));
  });

  it('contour.svg draws the cross-section to scale, with the mask, one line per junction and µm axes', () => {
    const svg = readFileSync(join(out, 'contour.svg'), 'utf8');
    expect(svg.startsWith('<svg xmlns="http://www.w3.org/2000/svg"')).toBe(true);
    const section = svg.match(/<rect x="[\d.]+" y="[\d.]+" width="([\d.]+)" height="([\d.]+)"/)!;
    // To scale: the drawn silicon has the aspect ratio of the cross-section (to the 0.01 px rounding).
    expect(Number(section[1]) / Number(section[2])).toBeCloseTo(report.crossSection.widthUm / report.crossSection.depthUm, 2);
    expect((svg.match(/class="mask"/g) ?? []).length).toBe(2);
    expect((svg.match(/class="junction"/g) ?? []).length).toBe(report.junctions.length);
    expect(svg).toContain('x (µm)');
    expect(svg).toContain('depth z (µm)');
  });

  it('--error-solves 0 skips the bars; a bad value is one line naming the option, exit 2', () => {
    const bare = edgewise(['run', recipePath, '--out', join(dir, 'bare'), '--error-solves', '0']);
    expect(bare.code, bare.stderr).toBe(0);
    expect(JSON.parse(readFileSync(join(dir, 'bare', 'report.json'), 'utf8')).errorEstimate).toBeUndefined();
    const bad = edgewise(['run', recipePath, '--out', join(dir, 'bad'), '--error-solves', '3']);
    expect(bad.code).toBe(2);
    expect(bad.stderr.trim().split('\n')).toHaveLength(1);
    expect(bad.stderr).toContain('--error-solves');
  });
});

describe('edgewise run: a window with a layer stack', () => {
  // A boron base then an arsenic emitter in n-type silicon (invented scenario), half the default mesh density.
  const stackPath = join(dir, 'stack.json');
  writeFileSync(stackPath, JSON.stringify({
    schema: 'edgewise.recipe/1',
    title: 'test: base and emitter (invented)',
    substrate: { dopant: 'P', concentrationCm3: 1e16 },
    crossSection: { widthUm: 10 },
    mask: { windows: [[2, 8]] },
    mesh: { refine: 0.5 },
    steps: [
      { kind: 'implant', dopant: 'B', doseCm2: 2e13, projectedRangeUm: 0.1, straggleUm: 0.04 },
      { kind: 'drive-in', temperatureC: 1050, minutes: 60 },
      { kind: 'implant', dopant: 'As', doseCm2: 5e15, projectedRangeUm: 0.04, straggleUm: 0.015 },
      { kind: 'anneal', temperatureC: 950, minutes: 20 },
    ],
  }));
  const out = join(dir, 'stack');
  const result = edgewise(['run', stackPath, '--out', out]);
  const report = JSON.parse(readFileSync(join(out, 'report.json'), 'utf8'));

  it('prints a row per layer: emitter and pinched base, each with its sheet resistance, error bar and mobility fit', () => {
    expect(result.code, result.stderr).toBe(0);
    expect(result.stdout).toMatch(/window +layer +type +top µm +bottom µm +Rs Ω\/sq +mobility fit/);
    expect(result.stdout).toMatch(/\n1 +1 +n +0\.000 +\d\.\d+ +[\d.]+ ± [\d.]+ +arsenic\n/);
    expect(result.stdout).toMatch(/\n1 +2 +p +\d\.\d+ +\d\.\d+ +[\d.]+ ± [\d.]+ +boron\n/);
  });

  it('report.json carries the stack with error bars, and the emitter\'s resistances', () => {
    expect(() => reportSchema.parse(report)).not.toThrow();
    const w = report.windows[0];
    expect(w.layerStack.map((l: { type: string }) => l.type)).toEqual(['n', 'p']);
    for (const l of w.layerStack) expect(l.errors.sheetResistanceOhmSq).toBeGreaterThan(0);
    expect(w.sheetResistanceOhmSq).toBe(w.layerStack[0].sheetResistanceOhmSq);
    expect(w.lineResistanceOhmPerUm).toBeGreaterThan(0);
    expect(report.mobility.fit).toBe('arsenic');
  });
});

describe('edgewise schema report', () => {
  it('prints the JSON Schema of report.json, strict about keys', () => {
    const r = edgewise(['schema', 'report']);
    expect(r.code, r.stderr).toBe(0);
    const schema = JSON.parse(r.stdout);
    expect(schema.$id).toBe('edgewise.report/1');
    expect(schema.additionalProperties).toBe(false);
    expect(schema.required).toEqual(expect.arrayContaining(['schema', 'windows', 'junctions', 'doseCm2', 'field']));
    const window = schema.properties.windows.items;
    expect(Object.keys(window.properties)).toEqual(expect.arrayContaining(['junctionDepthUm', 'sheetResistanceOhmSq', 'errors']));
  });
});

describe('edgewise spacing', () => {
  it('finds the narrowest stripe for a gap to the tolerance asked, and writes spacing.json with the pair', () => {
    const out = join(dir, 'spacing');
    const r = edgewise(['spacing', recipePath, '--gap', '0.2', '--tol', '0.01', '--error-solves', '1', '--out', out, '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/narrowest masked stripe keeping a junction-to-junction gap ≥ 0\.2 µm: \d\.\d+ ± \d\.\d+ µm/);
    const s = JSON.parse(readFileSync(join(out, 'spacing.json'), 'utf8'));
    expect(s.schema).toBe('edgewise.spacing/1');
    expect(s.bracketUm[1] - s.bracketUm[0]).toBeLessThanOrEqual(0.01);
    expect(s.stripeUm).toBe(s.bracketUm[1]);
    expect(s.spacing.merged).toBe(false);
    expect(s.spacing.minimumGapUm).toBeGreaterThanOrEqual(0.2);
    expect(s.stripesByMeshUm).toHaveLength(2);
    const pair = JSON.parse(readFileSync(join(out, 'report.json'), 'utf8'));
    expect(pair.windows).toHaveLength(2);
    expect(pair.spacings[0].stripeUm).toBeCloseTo(s.stripeUm, 9);
  });

  for (const [what, args, option] of [
    ['no --gap', [], '--gap'],
    ['a negative gap', ['--gap', '-1'], '--gap'],
    ['a gap that is not a number', ['--gap', 'wide'], '--gap'],
    ['a zero tolerance', ['--gap', '0.5', '--tol', '0'], '--tol'],
  ] as const) {
    it(`${what}: one line naming ${option}, exit 2`, () => {
      const r = edgewise(['spacing', recipePath, ...args, '--out', join(dir, 'never')]);
      expect(r.code).toBe(2);
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
      expect(r.stderr).toContain(option);
    });
  }
});
