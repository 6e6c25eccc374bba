/**
 * The full error-bar coverage study (the test runs the same study without the constant
 * sources' finer solves and with fewer spacing cases; see test/reference/error-coverage.test.ts):
 * every case at the default mesh with its error bars from meshes 2h and 4h, against exact
 * solutions, or solves 4× finer for the constant source's lateral, then the spacing search
 * against exact stripes. Prints the table and the shares. `npx tsx test/bench/error-coverage.bench.ts [spacing]`
 */
import { coverageSummary, coverageTable, spacingCases, spacingCoverage, windowCoverage } from '../support/coverage.ts';

const started = performance.now();
const onlySpacing = process.argv[2] === 'spacing';
if (!onlySpacing) {
  const { rows, cases } = windowCoverage(() => true);
  console.log(coverageTable(rows));
  const s = coverageSummary(rows);
  console.log(`windows: ${cases} cases, ${s.n} numbers: bar ≥ true error in ${(100 * s.bracketShare).toFixed(1)} %, ≤ 10× in ${(100 * s.tightShare).toFixed(1)} %, median bar/error ${s.medianRatio.toFixed(2)} (${((performance.now() - started) / 1000).toFixed(0)} s)`);
}
const t = performance.now();
const rows = spacingCoverage(spacingCases(), 2e-3);
console.log(coverageTable(rows));
const s = coverageSummary(rows);
console.log(`spacing: ${s.n} searches at tolerance 0.002 µm: bar ≥ true error in ${(100 * s.bracketShare).toFixed(1)} %, ≤ 10× in ${(100 * s.tightShare).toFixed(1)} %, median bar/error ${s.medianRatio.toFixed(2)} (${((performance.now() - t) / 1000).toFixed(0)} s)`);
