import fc from 'fast-check';
import { afterAll } from 'vitest';

/**
 * Property tests draw from one fixed seed, so CI sees the same cases on every run and a
 * failure names a seed and path that reproduce it (fast-check prints both).
 */
export const SEED = 20_260_707;

interface Tally {
  cases: number;
  ms: number;
  slowestMs: number;
}

const tallies = new Map<string, Tally>();
const worsts = new Map<string, number>();

/** Keeps the largest value seen under a name, printed with the counts (how close a bound came). */
export function worst(name: string, value: number): void {
  worsts.set(name, Math.max(worsts.get(name) ?? -Infinity, value));
}

/**
 * Counts one case of a property. Called from inside predicates, so that a property checked
 * by several tests (no negative concentration is checked after every solve) sums them.
 */
export function count(property: string, ms = 0): void {
  const t = tallies.get(property) ?? { cases: 0, ms: 0, slowestMs: 0 };
  t.cases++;
  t.ms += ms;
  t.slowestMs = Math.max(t.slowestMs, ms);
  tallies.set(property, t);
}

/** fc.assert with the fixed seed and `runs` cases, each counted under `property` with its time. */
export function check<T>(property: string, arbitrary: fc.Arbitrary<T>, predicate: (value: T) => void, runs: number): void {
  fc.assert(
    fc.property(arbitrary, (value) => {
      const started = performance.now();
      predicate(value);
      count(property, performance.now() - started);
    }),
    { seed: SEED, numRuns: runs, endOnFailure: true },
  );
}

/** Prints the cases run per property when the file's tests are done (the issue asks for the counts). */
export function printCountsAfterAll(file: string): void {
  afterAll(() => {
    const lines = [...tallies].map(([name, t]) =>
      `  ${name}: ${t.cases} cases, ${(t.ms / 1000).toFixed(1)} s, slowest ${t.slowestMs.toFixed(1)} ms`);
    for (const [name, v] of worsts) lines.push(`  ${name}: ${v.toExponential(2)}`);
    console.log(`property cases in ${file}:\n${lines.join('\n')}`);
  });
}

/** A number spread evenly in log10 between lo and hi (both > 0), kept inside [lo, hi]. */
export function logUniform(lo: number, hi: number): fc.Arbitrary<number> {
  return fc.double({ min: Math.log10(lo), max: Math.log10(hi), noNaN: true })
    .map((e) => Math.min(hi, Math.max(lo, 10 ** e)));
}

/** A number spread evenly in [lo, hi]. */
export function uniform(lo: number, hi: number): fc.Arbitrary<number> {
  return fc.double({ min: lo, max: hi, noNaN: true, noDefaultInfinity: true });
}

/** Rounds to 3 significant-looking decimals, as an engineer would write a length. */
export function round3(x: number): number {
  return Math.round(x * 1000) / 1000;
}

/** Every number in a value (walks objects and lists). */
export function numbersIn(value: unknown, path = '', out: [string, number][] = []): [string, number][] {
  if (typeof value === 'number') out.push([path, value]);
  else if (Array.isArray(value)) value.forEach((v, k) => numbersIn(v, `${path}[${k}]`, out));
  else if (value !== null && typeof value === 'object') for (const [k, v] of Object.entries(value)) numbersIn(v, path ? `${path}.${k}` : k, out);
  return out;
}
