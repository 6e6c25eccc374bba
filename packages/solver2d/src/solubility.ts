
/**
 * Approximate solid solubility of each built-in dopant in silicon, cm^-3, at tabulated
 * temperatures, read from the curves of F.A. Trumbore, Bell Syst. Tech. J. 39 (1960) 205
 * as reproduced in textbooks (values from memory, rounded; good to perhaps ±30 %).
 * Interpolated linearly in 1/T on a log scale between points; no extrapolation.
 */
export const SOLUBILITY_TABLE: Readonly<Record<string, readonly (readonly [number, number])[]>> = {
  B: [[800, 6e19], [900, 1.1e20], [1000, 2.0e20], [1100, 2.8e20], [1200, 3.5e20]],
  P: [[800, 3.5e20], [900, 6.5e20], [1000, 1.0e21], [1100, 1.2e21], [1200, 1.3e21]],
  As: [[800, 6e20], [900, 1.0e21], [1000, 1.5e21], [1100, 1.8e21], [1200, 2.0e21]],
  Sb: [[800, 1.5e19], [900, 3.0e19], [1000, 5.0e19], [1100, 6.5e19], [1200, 7.0e19]],
};

export const SOLUBILITY_SOURCE = 'F.A. Trumbore, Bell Syst. Tech. J. 39 (1960) 205 (curves; values from memory, approximate)';

/** Solubility at a temperature, or the reason it cannot be given. */
export function solidSolubilityCm3(dopant: string, temperatureC: number): number | string {
  const table = SOLUBILITY_TABLE[dopant];
  if (!table) return `has no solubility table for ${JSON.stringify(dopant)} (tabulated: ${Object.keys(SOLUBILITY_TABLE).join(', ')}); give a number`;
  return interpolateSolubility(table, temperatureC);
}

/** Log-linear in 1/T between tabulated [°C, cm^-3] points (ascending); no extrapolation. */
export function interpolateSolubility(table: readonly (readonly [number, number])[], temperatureC: number): number | string {
  const lo = table[0][0];
  const hi = table[table.length - 1][0];
  if (temperatureC < lo || temperatureC > hi) return `the solubility table covers ${lo} to ${hi} °C (got ${temperatureC} °C); give a number`;
  return extrapolatedSolubility(table, temperatureC);
}

/**
 * Log-linear in 1/T through the table, carried on along its end segments outside it: an
 * anneal at 700 °C still needs a limit (the extrapolation is ours, no source).
 */
export function extrapolatedSolubility(table: readonly (readonly [number, number])[], temperatureC: number): number {
  let k = 0;
  while (k + 2 < table.length && table[k + 1][0] < temperatureC) k++;
  const [t0, c0] = table[k];
  const [t1, c1] = table[k + 1];
  const inv = (t: number) => 1 / (t + 273.15);
  const f = (inv(temperatureC) - inv(t0)) / (inv(t1) - inv(t0));
  return Math.exp(Math.log(c0) + f * (Math.log(c1) - Math.log(c0)));
}

