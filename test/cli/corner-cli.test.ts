import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { edgewise, tempDir } from '../support/cli.ts';

/** A 3D recipe (mask.rectangles) of the test dopant: a film, then a short drive-in; invented. */
function recipe(mask: Record<string, unknown>, crossSection: Record<string, number> = { widthUm: 12, lengthUm: 10 }, extra: Record<string, unknown> = {}) {
  return {
    title: 'test: 3D film (invented)',
    substrate: { dopant: 'P', concentrationCm3: 1e16 },
    crossSection, mask,
    dopants: { Q: { type: 'acceptor', D0Cm2PerS: 1, EaEv: 3.5 } },
    mesh: { refine: 0.4 },
    steps: [{ kind: 'film', dopant: 'Q', doseCm2: 1e15 }, { kind: 'drive-in', temperatureC: 1050, minutes: 300 }],
    ...extra,
  };
}

const dir = tempDir('edgewise-corner-');

describe('edgewise run on a 3D recipe', () => {
  it('writes field.npy [layers, nz, ny, nx], x/y/z.npy, plan.svg and a report with rectangles and outlines', () => {
    const path = join(dir, 'l-shape.json');
    writeFileSync(path, JSON.stringify(recipe({ rectangles: [[2, 2, 8, 5], [2, 5, 5, 8]] })));
    const out = join(dir, 'l-out');
    const r = edgewise(['run', path, '--out', out, '--error-solves', '1', '--quiet']);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/corner BL µm/);
    for (const f of ['field.npy', 'x.npy', 'y.npy', 'z.npy', 'plan.svg', 'report.json', 'recipe.json']) expect(existsSync(join(out, f))).toBe(true);
    const report = JSON.parse(readFileSync(join(out, 'report.json'), 'utf8'));
    expect(report.rectangles).toHaveLength(2);
    expect(report.rectangles[1].cornerKind.bottomRight).toBe('concave');
    // The bar's top edge has its middle at (5, 5), the L's inside corner: no straight edge there,
    // so no edge reach (a ray up from it would run along the other rectangle's side).
    expect(report.rectangles[0].edgeReachUm.top).toBeNull();
    expect(report.rectangles[1].edgeReachUm.right).toBeGreaterThan(0);
    expect(typeof report.rectangles[0].errors.cornerReachUm.bottomRight).toBe('number');
    expect(report.plan.outlines.length).toBeGreaterThan(0);
    const [layers, nz, ny, nx] = report.field.shape;
    // The .npy header states the shape; the data are float64 (NumPy format 1.0).
    const npy = readFileSync(join(out, 'field.npy'));
    const headerLength = npy.readUInt16LE(8);
    expect(npy.subarray(10, 10 + headerLength).toString('latin1')).toContain(`'shape': (${layers}, ${nz}, ${ny}, ${nx})`);
    expect(npy.length - 10 - headerLength).toBe(8 * layers * nz * ny * nx);
    const svg = readFileSync(join(out, 'plan.svg'), 'utf8');
    expect(svg).toMatch(/<polyline/);
    // The inside corner of the L, (5, 5): its tick points where the reach was measured, into
    // the empty quadrant (+x, +y; up and right on the drawing), not into the window.
    const scale = Math.min(800 / 12, 800 / 10);
    const [cx, cy] = [56 + 5 * scale, 40 + (10 - 5) * scale];
    const ticks = [...svg.matchAll(/<line x1="([\d.]+)" y1="([\d.]+)" x2="([\d.]+)" y2="([\d.]+)"/g)].map((m) => m.slice(1).map(Number));
    const diagonal = ticks.filter(([x1, y1, x2, y2]) => Math.hypot(x1 - cx, y1 - cy) < 0.02 && Math.abs(Math.abs(x2 - x1) - Math.abs(y2 - y1)) < 0.05);
    expect(diagonal).toHaveLength(1);
    const [x1, y1, x2, y2] = diagonal[0];
    expect(Math.hypot(x2 - x1, y2 - y1) / scale).toBeCloseTo(report.rectangles[1].cornerReachUm.bottomRight, 3);
    expect([x2 > x1, y2 < y1]).toEqual([true, true]);
  });
});

describe('edgewise sweep on a 3D recipe', () => {
  it('sweeps a rectangle\'s size with --set: one row per run with each rectangle\'s depth and reaches; --resume reuses the finished runs', () => {
    const path = join(dir, 'square.json');
    writeFileSync(path, JSON.stringify(recipe({ rectangles: [[3, 3, 7, 7]] }, { widthUm: 10, lengthUm: 10 })));
    const out = join(dir, 'sweep-out');
    const r = edgewise(['sweep', path, '--set', 'mask.rectangles[0][2]=6,7', '--out', out, '--error-solves', '0', '--jobs', '1', '--quiet']);
    expect(r.code).toBe(0);
    const csv = readFileSync(join(out, 'sweep.csv'), 'utf8').trimEnd().split('\n');
    const header = csv[0].split(',');
    expect(header).toContain('cornerTopRightUm');
    expect(header).toContain('edgeLeftErrorUm');
    expect(csv).toHaveLength(3);
    const rows = csv.slice(1).map((l) => Object.fromEntries(l.split(',').map((v, k) => [header[k], v])));
    // A narrower rectangle (x1 = 6) reaches less deep than the wider one (the narrow-window effect, common practice (no source)).
    expect(Number(rows[0].junctionDepthUm)).toBeLessThan(Number(rows[1].junctionDepthUm));
    for (const row of rows) {
      expect(row.status).toBe('ok');
      expect(Number(row.cornerTopRightUm)).toBeLessThan(Number(row.edgeRightUm));
    }
    expect(JSON.parse(readFileSync(join(out, 'sweep.json'), 'utf8')).rectangles).toBe(true);
    const again = edgewise(['sweep', path, '--set', 'mask.rectangles[0][2]=6,7', '--out', out, '--error-solves', '0', '--jobs', '1', '--resume']);
    expect(again.code).toBe(0);
    expect(again.stderr).toMatch(/2 already finished/);
  });

  it('--widths on a 3D recipe: one line pointing to --set, exit 2', () => {
    const path = join(dir, 'square-widths.json');
    writeFileSync(path, JSON.stringify(recipe({ rectangles: [[3, 3, 7, 7]] }, { widthUm: 10, lengthUm: 10 })));
    const r = edgewise(['sweep', path, '--widths', '2,3', '--out', join(dir, 'w-out'), '--quiet']);
    expect(r.code).toBe(2);
    expect(r.stderr.trimEnd().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/--widths: resizes the windows of a 2D recipe .*--set, e\.g\. mask\.rectangles\[0\]\[2\]=/);
  });
});

describe('edgewise spacing on 3D recipes: corner to corner, corner to edge, edge to edge', () => {
  // Common practice (no source): corners reach less far than edges, so two windows may come
  // closer corner to corner than corner to edge, and closer corner to edge than edge to edge.
  const layouts: [string, number[][]][] = [
    ['corner-to-corner', [[2, 2, 5, 5], [7, 7, 10, 10]]],
    // The end of a 1 µm line (its two corners) facing the side of a long window.
    ['corner-to-edge', [[2, 2, 5, 10], [7, 5.5, 10, 6.5]]],
    ['edge-to-edge', [[2, 2, 5, 10], [7, 2, 10, 10]]],
  ];
  const answers: Record<string, { distance: number; gap: number }> = {};
  for (const [name, rectangles] of layouts) {
    it(`${name}: the narrowest masked distance keeping a 1 µm gap at the surface`, () => {
      const path = join(dir, `${name}.json`);
      writeFileSync(path, JSON.stringify(recipe({ rectangles }, { widthUm: 12, lengthUm: 12 }, { mesh: { refine: 0.3 } })));
      const out = join(dir, `${name}-spacing`);
      const r = edgewise(['spacing', path, '--gap', '1', '--tol', '0.01', '--error-solves', '0', '--out', out, '--quiet']);
      expect(r.code).toBe(0);
      const file = JSON.parse(readFileSync(join(out, 'spacing.json'), 'utf8'));
      expect(file.rectangles).toHaveLength(2);
      expect(file.spacing.merged).toBe(false);
      expect(file.spacing.minimumGapUm).toBeGreaterThanOrEqual(1);
      answers[name] = { distance: file.stripeUm, gap: file.spacing.minimumGapUm };
    });
  }
  it('corner to corner < corner to edge < edge to edge', () => {
    console.log(`3D spacing for a 1 µm gap: ${Object.entries(answers).map(([k, v]) => `${k} ${v.distance.toFixed(3)} µm`).join(', ')}`);
    expect(answers['corner-to-corner'].distance).toBeLessThan(answers['corner-to-edge'].distance);
    expect(answers['corner-to-edge'].distance).toBeLessThan(answers['edge-to-edge'].distance);
  });
});

describe('bad 3D input: one line naming the field, exit 2, nothing written', () => {
  const cases: { name: string; recipe: unknown; args?: string[]; line: RegExp }[] = [
    { name: 'windows and rectangles together', recipe: recipe({ windows: [[1, 2]], rectangles: [[2, 2, 8, 5]] }),
      line: /^edgewise: bad recipe: mask\.rectangles: cannot be given with mask\.windows: .*give one of them$/ },
    { name: 'overlapping rectangles', recipe: recipe({ rectangles: [[2, 2, 8, 5], [4, 4, 6, 8]] }),
      line: /^edgewise: bad recipe: mask\.rectangles\[1\]: overlaps mask\.rectangles\[0\] .*may touch along an edge.*not overlap/ },
    { name: 'a rectangle outside the cross-section', recipe: recipe({ rectangles: [[2, 2, 8, 11]] }),
      line: /^edgewise: bad recipe: mask\.rectangles\[0\]: must lie inside the cross-section \[0, 12\] × \[0, 10\] µm/ },
    { name: 'no lengthUm', recipe: recipe({ rectangles: [[2, 2, 8, 5]] }, { widthUm: 12 }),
      line: /^edgewise: bad recipe: crossSection\.lengthUm: is required with mask\.rectangles/ },
    { name: 'a mesh above the limit', recipe: recipe({ rectangles: [[2, 2, 8, 5]] }), args: ['--max-mesh-points', '1000'],
      line: /^edgewise: bad recipe: mesh: would need \d+ mesh points \(\d+ × \d+ × \d+, about \d+ MiB at the peak\), above the limit of 1000/ },
  ];
  for (const c of cases) {
    it(c.name, () => {
      const path = join(dir, `${c.name.replace(/\W+/g, '-')}.json`);
      writeFileSync(path, JSON.stringify(c.recipe));
      const out = join(dir, `bad-${c.name.replace(/\W+/g, '-')}`);
      const r = edgewise(['run', path, '--out', out, '--quiet', ...(c.args ?? [])]);
      expect(r.code).toBe(2);
      const lines = r.stderr.trimEnd().split('\n');
      expect(lines).toHaveLength(1);
      expect(lines[0]).toMatch(c.line);
      expect(existsSync(out)).toBe(false);
    });
  }
});
