import { describe, expect, it } from 'vitest';
import { coverageSummary, coverageTable, spacingCases, spacingCoverage, windowCoverage } from '../support/coverage.ts';

// Coverage study of the error bars (error-bars.ts): every case with a known answer, solved at
// the default mesh with its bars from meshes 2h and 4h, against exact solutions (closed forms
// with constant D: erfc for a constant source's depth, the separable film and implant fields
// with their images, ramps by Simpson quadrature of ∫D dt; test/support/coverage-cases.ts) or,
// for a constant source's lateral encroachment, which has no closed form, a solve 4× finer.
// Criteria (the project's own, no source): the bar is at least the true error for ≥ 95 % of
// the numbers and at most 10× it for ≥ 80 %. The finer solves are slow, so the test makes
// them for the two constant-source cases at Cs/NB 1e3 only, where the measured order came out
// at 6 and the old bars were 50× too small; test/bench/error-coverage.bench.ts runs them all,
// and the full spacing study, and prints the tables.
describe('error bars bracket the true error: coverage study', () => {
  const { rows, cases } = windowCoverage((c) => c.name.includes('Cs/NB 1e+3') && !c.name.includes('1050'));

  it(`junction depth, lateral, reach and its depth over ≥ 40 cases: bar ≥ true error in ≥ 95 %, ≤ 10× it in ≥ 80 %`, () => {
    const s = coverageSummary(rows);
    console.log(`${coverageTable(rows)}\nwindows: ${cases} cases, ${s.n} numbers: bar ≥ true error in ${(100 * s.bracketShare).toFixed(1)} %, ` +
      `≤ 10× in ${(100 * s.tightShare).toFixed(1)} %, median bar/error ${s.medianRatio.toFixed(2)}`);
    expect(cases).toBeGreaterThanOrEqual(40);
    expect(rows.filter((r) => r.reference === 'finer solve').length).toBeGreaterThanOrEqual(2);
    expect(s.bracketShare).toBeGreaterThanOrEqual(0.95);
    expect(s.tightShare).toBeGreaterThanOrEqual(0.8);
  });

  it('no bar is 0 where the solves differ', () => {
    for (const r of rows) if (r.trueError > 1e-9) expect(r.bar, `${r.name} ${r.quantity}`).toBeGreaterThan(0);
  });
});

// The same for `spacing`: the narrowest stripe for a gap, searched on meshes h, 2h and 4h,
// against the exact stripe of two equal film windows (separable, so the closest approach is
// the stripe less twice the pair field's widest extent; see spacingCases). Two cases here, the
// full set in the bench.
describe('spacing error bars bracket the true error', () => {
  const rows = spacingCoverage(spacingCases(/^film 2 µm window, 1100|Rp 0\.2 µm, 1050/).filter((c) => c.gapUm > 0), 2e-3);
  it('the stripe\'s bar (Richardson plus the bisection bracket) is at least its true error and at most 10× it', () => {
    console.log(coverageTable(rows));
    expect(rows.length).toBeGreaterThanOrEqual(2);
    for (const r of rows) {
      expect(r.bar, r.name).toBeGreaterThanOrEqual(r.trueError);
      expect(r.bar, r.name).toBeLessThanOrEqual(10 * r.trueError);
    }
  });
});
