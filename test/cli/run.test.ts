import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { edgewise, REPO, tempDir } from '../support/cli.ts';

describe('edgewise run on the bundled example', () => {
  const out = join(tempDir(), 'base');
  const result = edgewise(['run', join(REPO, 'examples', 'base-resistor.json'), '--out', out]);

  it('exits 0 and prints a table with units', () => {
    expect(result.code, result.stderr).toBe(0);
    for (const heading of ['xj µm', 'lateral L µm', 'lateral R µm', 'lateral/xj', 'surface cm^-3']) expect(result.stdout).toContain(heading);
    expect(result.stdout).toMatch(/dose per open area: B \d\.\d\de\d+ cm\^-2/);
  });

  it('writes the run folder: report.json by the contract, field.npy, x.npy, z.npy, contour.csv', () => {
    for (const f of ['report.json', 'field.npy', 'x.npy', 'z.npy', 'contour.csv']) expect(existsSync(join(out, f)), f).toBe(true);
    const report = JSON.parse(readFileSync(join(out, 'report.json'), 'utf8'));
    expect(report.schema).toBe('edgewise.report/1');
    const w = report.windows[0];
    expect([w.x0Um, w.x1Um]).toEqual([8, 16]);
    for (const key of ['junctionDepthUm', 'lateralLeftUm', 'lateralRightUm', 'surfaceConcentrationCm3']) expect(typeof w[key]).toBe('number');
    // A symmetric window in a symmetric cross-section: the two edges agree (common practice).
    expect(Math.abs(w.lateralLeftUm - w.lateralRightUm)).toBeLessThan(1e-6);
    expect(report.junctions.length).toBeGreaterThan(0);
    expect(report.junctions[0].polylinesUm[0].length).toBeGreaterThan(10);
    expect(report.doseCm2.B).toBeGreaterThan(0);
    const csv = readFileSync(join(out, 'contour.csv'), 'utf8').trim().split('\n');
    expect(csv[0]).toBe('junction,point,xUm,zUm');
    expect(csv.length - 1).toBe(report.junctions.reduce((n: number, j: { polylinesUm: unknown[][] }) => n + j.polylinesUm.flat().length, 0));
  });

  it('field.npy carries the shape the report states, in NumPy format 1.0', () => {
    const bytes = readFileSync(join(out, 'field.npy'));
    expect([...bytes.subarray(0, 8)]).toEqual([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0]);
    const headerLength = bytes.readUInt16LE(8);
    const header = bytes.subarray(10, 10 + headerLength).toString('latin1');
    const report = JSON.parse(readFileSync(join(out, 'report.json'), 'utf8'));
    expect(header).toContain(`'shape': (${report.field.shape.join(', ')})`);
    expect((10 + headerLength) % 64).toBe(0);
    expect(bytes.length - 10 - headerLength).toBe(8 * report.field.shape.reduce((a: number, b: number) => a * b, 1));
  });
});

const base = () => ({
  substrate: { dopant: 'P', concentrationCm3: 1e15 },
  crossSection: { widthUm: 24 },
  mask: { windows: [[8, 16]] as unknown[] },
  steps: [
    { kind: 'predeposition', dopant: 'B', surfaceConcentrationCm3: 1e20, temperatureC: 950, minutes: 30 } as Record<string, unknown>,
    { kind: 'drive-in', temperatureC: 1100, minutes: 60 } as Record<string, unknown>,
  ],
});
type R = ReturnType<typeof base> & Record<string, unknown>;

// Each bad recipe: what to break, and the field the one-line error must name.
const BAD: [string, (r: R) => void, string][] = [
  ['negative time', (r) => { r.steps[1].minutes = -5; }, 'steps[1].minutes'],
  ['zero time', (r) => { r.steps[0].minutes = 0; }, 'steps[0].minutes'],
  ['window outside the cross-section', (r) => { r.mask.windows = [[20, 30]]; }, 'mask.windows[0]'],
  ['window of zero width', (r) => { r.mask.windows = [[8, 8]]; }, 'mask.windows[0]'],
  ['overlapping windows', (r) => { r.mask.windows = [[2, 10], [8, 16]]; }, 'mask.windows[1]'],
  ['a string where a number goes', (r) => { r.substrate.concentrationCm3 = '1e15' as unknown as number; }, 'substrate.concentrationCm3'],
  ['missing field', (r) => { delete r.steps[0].dopant; }, 'steps[0].dopant'],
  ['unknown key', (r) => { (r.crossSection as Record<string, unknown>).heightUm = 3; }, 'crossSection'],
  ['unknown dopant', (r) => { r.steps[0].dopant = 'Ga'; }, 'steps[0].dopant'],
  ['unknown step kind', (r) => { r.steps[1].kind = 'bake'; }, 'steps[1].kind'],
  ['temperature outside the tables', (r) => { r.steps[1].temperatureC = 1500; }, 'steps[1].temperatureC'],
  ['a ramp that leaves the tables', (r) => { r.steps[1].temperatureC = [900, 1500]; }, 'steps[1].temperatureC'],
  ['a ramp with a non-positive duration', (r) => { r.steps[1] = { kind: 'drive-in', temperatureC: [900, 1100], minutes: 0 }; }, 'steps[1].minutes'],
  ['a negative dose', (r) => { r.steps[0] = { kind: 'implant', dopant: 'B', doseCm2: -1e15, projectedRangeUm: 0.1, straggleUm: 0.03 }; }, 'steps[0].doseCm2'],
  ['a solubility source outside its table', (r) => { r.steps[0].surfaceConcentrationCm3 = 'solubility'; r.steps[0].temperatureC = 1300; }, 'steps[0].surfaceConcentrationCm3'],
  ['a diffusion model that does not exist', (r) => { r.diffusion = { model: 'fast' }; }, 'diffusion.model'],
  ['an unknown ambient', (r) => { r.steps[1].ambient = 'ozone'; }, 'steps[1].ambient'],
  ['an ambient on an implant step', (r) => {
    r.steps[0] = { kind: 'implant', dopant: 'B', doseCm2: 1e14, projectedRangeUm: 0.1, straggleUm: 0.03, ambient: 'steam' };
  }, 'steps[0]'],
  ['TED switched on for arsenic alone', (r) => {
    r.steps[0] = { kind: 'implant', dopant: 'As', doseCm2: 1e15, projectedRangeUm: 0.05, straggleUm: 0.02 };
    r.physics = { ted: true };
  }, 'physics.ted'],
  ['OED switched on without an oxidising step', (r) => { r.physics = { oxidationEnhanced: true }; }, 'physics.oxidationEnhanced'],
  ['OED switched on for arsenic alone', (r) => {
    r.steps[0] = { kind: 'implant', dopant: 'As', doseCm2: 1e15, projectedRangeUm: 0.05, straggleUm: 0.02 };
    r.steps[1].ambient = 'steam';
    r.physics = { oxidationEnhanced: true };
  }, 'physics.oxidationEnhanced'],
];

describe('bad recipes: exit 2, one line naming the field, nothing written', () => {
  const dir = tempDir();
  for (const [name, breakIt, field] of BAD) {
    it(name, () => {
      const recipe = base() as R;
      breakIt(recipe);
      const path = join(dir, `${name.replace(/\W+/g, '-')}.json`);
      writeFileSync(path, JSON.stringify(recipe));
      const out = join(dir, `out-${name.replace(/\W+/g, '-')}`);
      const r = edgewise(['run', path, '--out', out]);
      expect(r.code).toBe(2);
      const lines = r.stderr.trim().split('\n');
      expect(lines).toHaveLength(1);
      expect(lines[0]).toContain(field);
      expect(existsSync(out)).toBe(false);
    });
  }

  it('NaN in YAML where a number goes', () => {
    const path = join(dir, 'nan.yaml');
    writeFileSync(path, 'substrate: { dopant: P, concentrationCm3: 1e15 }\ncrossSection: { widthUm: 24 }\nmask: { windows: [[8, 16]] }\nsteps:\n  - { kind: drive-in, temperatureC: .nan, minutes: 5 }\n');
    const r = edgewise(['run', path, '--out', join(dir, 'out-nan')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('steps[0].temperatureC');
    expect(r.stderr).toContain('NaN');
  });

  it('a recipe file that does not exist', () => {
    const r = edgewise(['run', join(dir, 'missing.json')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('no such recipe file');
  });

  it('an unknown option', () => {
    const r = edgewise(['run', join(REPO, 'examples', 'base-resistor.json'), '--frobnicate']);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('--frobnicate');
  });
});
