import { describe, expect, it } from 'vitest';
import { peakMemoryMiB } from '../../packages/solver2d/src/plan-terms.ts';

/**
 * The mesh limit's memory figure against peaks measured on this project's runs (/usr/bin/time -v,
 * maximum resident set, fresh processes, --error-solves 0, square 2D meshes of one species; the
 * 3D corner example on its quarter). These are the project's own measurements (README, limits),
 * not an outside source: the check is that the refusal's "about N MiB" stays within 25 % of them.
 */
const MEASURED_2D: [points: number, mib: number][] = [[62_500, 78], [250_000, 102], [1e6, 210], [2e6, 353], [4e6, 578]];

describe('peak memory estimate of a run', () => {
  it('is within 25 % of the measured 2D peaks from 62,500 to 4e6 points', () => {
    for (const [points, mib] of MEASURED_2D) {
      expect(Math.abs(peakMemoryMiB(points, 2) / mib - 1), `${points} points`).toBeLessThan(0.25);
    }
  });
  it('is within 25 % of the measured 3D corner solve (3.0e6 points, 213 MiB)', () => {
    expect(Math.abs(peakMemoryMiB(3.0e6, 3) / 213 - 1)).toBeLessThan(0.25);
  });
  it('grows with the mesh and is never below the fixed cost', () => {
    expect(peakMemoryMiB(0, 2)).toBe(75);
    expect(peakMemoryMiB(2e6, 2)).toBeGreaterThan(peakMemoryMiB(1e6, 2));
  });
});
