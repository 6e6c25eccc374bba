import { describe, expect, it } from 'vitest';
import { formatTick, niceStep, niceTicks } from '../../packages/viewer/src/ticks.ts';

// Expected ticks are worked by hand from Heckbert's rule ("Nice numbers for graph labels",
// Graphics Gems, 1990): step = 1, 2 or 5 × 10^k nearest span/target, ticks its multiples.
describe('axis ticks', () => {
  it('ticks a 24 µm cross-section every 5 µm from 0', () => {
    const t = niceTicks(0, 24, 5);
    expect(t.step).toBe(5);
    expect(t.values).toEqual([0, 5, 10, 15, 20]);
  });

  it('ticks a 1.905 µm depth every 0.5 µm with one decimal', () => {
    const t = niceTicks(0, 1.905, 4);
    expect(t.step).toBeCloseTo(0.5, 12);
    expect(t.values).toEqual([0, 0.5, 1, 1.5]);
    expect(t.values.map((v) => formatTick(v, t))).toEqual(['0.0', '0.5', '1.0', '1.5']);
  });

  it('gives multiples of the step inside an offset range (a zoomed view)', () => {
    const t = niceTicks(6.73, 6.91, 4);
    expect(t.step).toBeCloseTo(0.05, 12);
    expect(t.values).toEqual([6.75, 6.8, 6.85, 6.9]);
  });

  it('always steps by 1, 2 or 5 times a power of ten', () => {
    for (const span of [0.013, 0.7, 3, 17, 240, 9999]) {
      for (const target of [2, 4, 7, 10]) {
        const step = niceStep(span, target);
        const mantissa = step / 10 ** Math.floor(Math.log10(step) + 1e-12);
        expect([1, 2, 5, 10].some((m) => Math.abs(mantissa - m) < 1e-9)).toBe(true);
      }
    }
  });

  it('keeps every tick in range and their count near the target', () => {
    for (const [lo, hi] of [[0, 1], [2.5, 97], [-3, 3], [0.0012, 0.0047]]) {
      const t = niceTicks(lo, hi, 5);
      for (const v of t.values) expect(v).toBeGreaterThanOrEqual(lo - 1e-12), expect(v).toBeLessThanOrEqual(hi + 1e-12);
      expect(t.values.length).toBeGreaterThanOrEqual(2);
      expect(t.values.length).toBeLessThanOrEqual(11);
    }
  });

  it('handles a reversed and an empty range', () => {
    expect(niceTicks(10, 0, 2).values).toEqual([0, 5, 10]);
    expect(niceTicks(3, 3).values).toEqual([3]);
  });
});
