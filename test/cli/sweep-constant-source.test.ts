import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { edgewise, readCsv, tempDir } from '../support/cli.ts';
import { erfcJunctionDepth } from '../support/closed-forms.ts';

/**
 * A width sweep of a constant-surface-concentration source, carried by the recipe's own
 * `sweep` key (no --widths flag).
 */
const NB = 1e15;
const CS = 1e20;
const SECTION_UM = 16;
const WIDTHS_UM = [0.1, 0.2, 0.5, 1, 2, 4, 6];

const recipe = {
  title: 'constant source, window width sweep (test)',
  substrate: { dopant: 'P', concentrationCm3: NB },
  crossSection: { widthUm: SECTION_UM },
  mask: { windows: [[7, 9]] },
  dopants: { Q: { type: 'acceptor', D0Cm2PerS: 1, EaEv: 3.5 } },
  steps: [{ kind: 'predeposition', dopant: 'Q', surfaceConcentrationCm3: CS, temperatureC: 1100, minutes: 30 }],
  sweep: { widthsUm: WIDTHS_UM.join(',') },
};

describe('edgewise sweep from the recipe\'s own sweep key: constant source', () => {
  const dir = tempDir('edgewise-sweep-cs-');
  const out = join(dir, 'out');
  let result: ReturnType<typeof edgewise>;
  let rows: { width: number; xj: number; left: number; right: number }[] = [];
  let dt = NaN;

  beforeAll(() => {
    writeFileSync(join(dir, 'constant.json'), JSON.stringify(recipe, null, 2));
    result = edgewise(['sweep', join(dir, 'constant.json'), '--out', out, '--quiet']);
    if (result.code !== 0) return;
    rows = readCsv(join(out, 'sweep.csv')).map((r) => ({
      width: Number(r.windowWidthUm), xj: Number(r.junctionDepthUm), left: Number(r.lateralLeftUm), right: Number(r.lateralRightUm),
    }));
    const index = JSON.parse(readFileSync(join(out, 'sweep.json'), 'utf8'));
    dt = JSON.parse(readFileSync(join(out, index.runs[0].dir, 'report.json'), 'utf8')).thermalBudgetUm2.Q;
  });

  it('runs the widths the recipe lists, with a summary table on stdout', () => {
    expect(result.code).toBe(0);
    expect(rows.map((r) => r.width)).toEqual(WIDTHS_UM);
    const lines = result.stdout.trim().split('\n');
    expect(lines[0]).toMatch(/^run\s+windowWidthUm\s+xj µm\s+lateral L µm\s+lateral R µm\s+lateral\/xj\s+surface cm\^-3\s+status$/);
    expect(lines.filter((l) => /\sok$/.test(l))).toHaveLength(WIDTHS_UM.length);
  });

  it('lateral encroachment does not depend on width once the window is wide (common practice)', () => {
    // "Wide": at least six diffusion lengths √(Dt) ≈ 0.16 µm across, i.e. 1 µm and up here.
    const wide = rows.filter((r) => r.width >= 6 * Math.sqrt(dt));
    expect(wide.length).toBeGreaterThanOrEqual(4);
    for (const r of wide) {
      expect(Math.abs(r.left / wide[wide.length - 1].left - 1), `width ${r.width} µm`).toBeLessThan(0.005);
      expect(r.right).toBe(r.left);
    }
  });

  it('the centre junction depth falls for narrow windows and reaches the 1D erfc depth for wide ones', () => {
    const widest = rows[rows.length - 1];
    // Very wide window: xj = 2√(Dt)·erfc⁻¹(NB/Cs) (closed form, REFERENCES.md; erfcinv from @stdlib), within 1 %.
    expect(Math.abs(widest.xj / erfcJunctionDepth(CS, NB, dt) - 1)).toBeLessThan(0.01);
    // Narrow windows: the 2D source is smaller, so the junction is shallower (Kennedy & O'Brien's
    // group, 1966: the depth depends on width below about two diffusion lengths).
    expect(rows[0].xj).toBeLessThan(0.95 * widest.xj);
    for (let k = 1; k < rows.length; k++) expect(rows[k].xj).toBeGreaterThanOrEqual(rows[k - 1].xj);
  });
});
